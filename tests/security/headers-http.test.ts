import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startTestServer, type TestServer } from '../support/server';
import { rawRequest } from './raw-http';

// Header values per the OWASP Secure Headers project and MDN's CSP reference (from memory; common practice).
describe('security headers on pages and API', () => {
  let server: TestServer;
  beforeAll(async () => {
    server = await startTestServer();
  });
  afterAll(() => server?.stop());

  function common(h: Record<string, string | string[] | undefined>) {
    expect(h['x-content-type-options']).toBe('nosniff');
    expect(h['x-frame-options']).toBe('DENY');
    expect(h['referrer-policy']).toBe('same-origin');
    expect(h['x-powered-by']).toBeUndefined();
  }

  it('a page: nonce-based CSP whose nonce is on every script, fresh per response; no HSTS over plain http', async () => {
    const [a, b] = await Promise.all([rawRequest(server.baseUrl, '/sign-in'), rawRequest(server.baseUrl, '/sign-in')]);
    expect(a.status).toBe(200);
    common(a.headers);
    const csp = String(a.headers['content-security-policy']);
    const nonce = /'nonce-([A-Za-z0-9+/=]+)'/.exec(csp)?.[1];
    expect(nonce).toBeDefined();
    expect(csp).toMatch(/script-src 'self' 'nonce-[^']+' 'strict-dynamic'(;|$)/);
    expect(csp).not.toMatch(/unsafe-eval/);
    expect(csp).toContain("frame-ancestors 'none'");
    expect(csp).toContain("object-src 'none'");
    expect(csp).toContain("worker-src 'self' blob:");
    expect(csp).toContain("img-src 'self' data: blob:");
    const scripts = [...a.body.matchAll(/<script\b[^>]*>/g)].map((m) => m[0]);
    expect(scripts.length).toBeGreaterThan(0);
    for (const tag of scripts) expect(tag).toContain(`nonce="${nonce}"`);
    expect(String(b.headers['content-security-policy'])).not.toContain(nonce!);
    expect(a.headers['strict-transport-security']).toBeUndefined();
  });

  it('the not-found page is rendered per request too: its scripts carry the response nonce', async () => {
    const r = await rawRequest(server.baseUrl, '/no-such-page-here');
    expect(r.status).toBe(404);
    const nonce = /'nonce-([A-Za-z0-9+/=]+)'/.exec(String(r.headers['content-security-policy']))?.[1];
    expect(nonce).toBeDefined();
    const scripts = [...r.body.matchAll(/<script\b[^>]*>/g)].map((m) => m[0]);
    expect(scripts.length).toBeGreaterThan(0);
    for (const tag of scripts) expect(tag).toContain(`nonce="${nonce}"`);
  });

  it('an API route: a policy that allows nothing, the same common headers, no HSTS over plain http', async () => {
    for (const p of ['/api/v1/auth/session', '/api/v1/openapi.json']) {
      const res = await rawRequest(server.baseUrl, p);
      common(res.headers);
      expect(String(res.headers['content-security-policy'])).toMatch(/^default-src 'none'; frame-ancestors 'none'/);
      expect(res.headers['strict-transport-security']).toBeUndefined();
    }
  });

  it('HSTS when the request came over TLS (X-Forwarded-Proto: https from the terminating proxy), pages and API', async () => {
    for (const p of ['/sign-in', '/api/v1/auth/session']) {
      const res = await rawRequest(server.baseUrl, p, { headers: { 'x-forwarded-proto': 'https' } });
      expect(res.headers['strict-transport-security']).toMatch(/^max-age=\d{7,}/);
    }
  });

  it('static assets get nosniff too', async () => {
    const page = await rawRequest(server.baseUrl, '/sign-in');
    const asset = /\/_next\/static\/[^"']+\.js/.exec(page.body)?.[0];
    expect(asset).toBeDefined();
    const res = await rawRequest(server.baseUrl, asset!);
    expect(res.status).toBe(200);
    expect(res.headers['x-content-type-options']).toBe('nosniff');
  });
});
