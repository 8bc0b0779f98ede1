import nodemailer from 'nodemailer';
import { describe, expect, it } from 'vitest';
import { z } from 'zod';
import { safeNextPath } from '@/lib/http/base-url';
import { ApiError, toErrorResponse } from '@/lib/http/errors';
import { isSameOriginRequest } from '@/lib/http/origin';
import { parseMessage } from '@/lib/mail/parse-message';
import { inviteInput, signUpInput } from '@/lib/data/schemas';

// The sign-in limits moved to the database: tests/security/throttle.test.ts.

describe('isSameOriginRequest(method, headers)', () => {
  const h = (o: Record<string, string>) => new Headers(o);
  it('lets safe methods through without Origin', () => {
    expect(isSameOriginRequest('GET', h({ host: 'a.test' }))).toBe(true);
  });
  it('accepts a POST whose Origin host equals Host', () => {
    expect(isSameOriginRequest('POST', h({ host: 'a.test:3000', origin: 'http://a.test:3000' }))).toBe(true);
  });
  it('refuses a POST from another site, with no Origin, or with Origin "null"', () => {
    expect(isSameOriginRequest('POST', h({ host: 'a.test', origin: 'http://evil.test' }))).toBe(false);
    expect(isSameOriginRequest('POST', h({ host: 'a.test' }))).toBe(false);
    expect(isSameOriginRequest('DELETE', h({ host: 'a.test', origin: 'null' }))).toBe(false);
    expect(isSameOriginRequest('POST', h({ host: 'a.test', origin: 'http://a.test.evil.test' }))).toBe(false);
  });
  it('falls back to Referer, and gives an Authorization header no exemption (token-only routes skip the check instead)', () => {
    expect(isSameOriginRequest('POST', h({ host: 'a.test', referer: 'http://a.test/projects' }))).toBe(true);
    expect(isSameOriginRequest('POST', h({ host: 'a.test', authorization: 'Bearer abc' }))).toBe(false);
    expect(isSameOriginRequest('POST', h({ host: 'a.test', authorization: 'Bearer abc', origin: 'http://evil.test' }))).toBe(false);
  });
});

describe('toErrorResponse(error)', () => {
  it('maps ApiError to its status and message', async () => {
    const res = toErrorResponse(new ApiError('forbidden', 'No.'));
    expect(res.status).toBe(403);
    expect(await res.json()).toEqual({ error: { code: 'forbidden', message: 'No.' } });
  });
  it('maps a ZodError to 400 with per-field messages', async () => {
    const parsed = inviteInput.safeParse({ email: 'not-an-address', role: 'wizard' });
    expect(parsed.success).toBe(false);
    const res = toErrorResponse(parsed.error);
    const body = (await res.json()) as { error: { fieldErrors: Record<string, string[]> } };
    expect(res.status).toBe(400);
    expect(body.error.fieldErrors.email?.[0]).toMatch(/valid e-mail/);
    expect(body.error.fieldErrors.role?.[0]).toMatch(/four roles/);
  });
  it('answers unknown errors with a generic 500 that contains no message or stack', async () => {
    const original = console.error;
    console.error = () => {};
    try {
      const res = toErrorResponse(new Error('SQLITE_CONSTRAINT secret detail'));
      const text = await res.text();
      expect(res.status).toBe(500);
      expect(text).not.toMatch(/SQLITE|secret|at .*\.ts/);
    } finally {
      console.error = original;
    }
  });
});

describe('form schemas', () => {
  it('signUpInput lower-cases the e-mail and requires 10-character passwords', () => {
    const ok = signUpInput.parse({ name: 'A', email: ' Someone@Example.COM ', password: '0123456789' });
    expect(ok.email).toBe('someone@example.com');
    const bad = signUpInput.safeParse({ name: '', email: 'x', password: 'short' });
    expect(bad.success).toBe(false);
    if (!bad.success) expect(Object.keys(z.flattenError(bad.error).fieldErrors).sort()).toEqual(['email', 'name', 'password']);
  });
});

describe('safeNextPath(next)', () => {
  it('keeps same-site paths and replaces anything else with /projects', () => {
    expect(safeNextPath('/teams/x')).toBe('/teams/x');
    expect(safeNextPath('//evil.test/')).toBe('/projects');
    expect(safeNextPath('/\\evil.test')).toBe('/projects');
    expect(safeNextPath('https://evil.test')).toBe('/projects');
    expect(safeNextPath(undefined)).toBe('/projects');
  });
});

describe('parseMessage(raw)', () => {
  it('reads subject, team header and a quoted-printable body as composed by nodemailer', async () => {
    // nodemailer's own stream transport produces the raw RFC 5322 message, an independent composer.
    const transport = nodemailer.createTransport({ streamTransport: true, buffer: true, newline: 'crlf' });
    const info = await transport.sendMail({
      from: 'a@example.com',
      to: 'b@example.com',
      subject: 'Invitation to Läppchen — 5 µm vias',
      text: `Line one with ümlauts and a long link https://example.com/invite/${'x'.repeat(90)}\nLine two`,
      headers: { 'X-Trenchant-Team': 'team-42' },
    });
    const parsed = parseMessage((info.message as Buffer).toString('utf8'));
    expect(parsed.subject).toBe('Invitation to Läppchen — 5 µm vias');
    expect(parsed.teamId).toBe('team-42');
    expect(parsed.body).toContain(`https://example.com/invite/${'x'.repeat(90)}`);
    expect(parsed.body).toContain('ümlauts');
    expect(parsed.body.split(/\r?\n/).at(-1)).toBe('Line two');
  });
});
