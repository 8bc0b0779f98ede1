import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DEMO_PASSWORD_DEFAULT, DEMO_USERS } from '@/lib/data/demo';
import { startTestServer, type TestServer } from '../support/server';
import { rawRequest, signInFrom } from './raw-http';

/**
 * Sign-in and sign-up limits over HTTP. Client addresses are real: each test binds its socket to its own
 * 127.0.0.x address, and the server sees that as the TCP peer (X-Forwarded-For is not trusted by default).
 */
const byRole = (role: string) => DEMO_USERS.find((u) => u.role === role)!;
const ok = (status: number) => expect(status).toBe(200);

describe('sign-in limits: backoff per account and address, no hard lock, kept across a restart', () => {
  const dir = mkdtempSync(path.join(tmpdir(), 'trenchant-limits-'));
  const env = { TRENCHANT_DB: path.join(dir, 'trenchant.db'), TRENCHANT_SIGNUP_MAX_PER_HOUR: '3' };
  let server: TestServer;
  beforeAll(async () => {
    server = await startTestServer({ env });
  });
  afterAll(async () => {
    await server?.stop();
    rmSync(dir, { recursive: true, force: true });
  });

  it('after 5 wrong passwords from one address, that address waits (429 + Retry-After) — the right password from another address still works', async () => {
    const pe = byRole('process_engineer');
    for (let i = 0; i < 5; i++) expect((await signInFrom(server.baseUrl, '127.0.0.11', pe.email, `wrong-guess-${i}-x`)).status).toBe(401);
    const blocked = await signInFrom(server.baseUrl, '127.0.0.11', pe.email, DEMO_PASSWORD_DEFAULT);
    expect(blocked.status).toBe(429);
    const retryAfter = Number(blocked.headers['retry-after']);
    expect(retryAfter).toBeGreaterThan(0);
    expect(retryAfter).toBeLessThanOrEqual(30);
    expect(JSON.parse(blocked.body).error.message).toMatch(/Try again in \d+ s/);
    // the owner elsewhere is not locked out
    ok((await signInFrom(server.baseUrl, '127.0.0.12', pe.email, DEMO_PASSWORD_DEFAULT)).status);
    // and other accounts from the waiting address are not held back by this pair
    ok((await signInFrom(server.baseUrl, '127.0.0.11', byRole('designer').email, DEMO_PASSWORD_DEFAULT)).status);
  });

  it('a forged X-Forwarded-For does not give a fresh address', async () => {
    const rv = byRole('reviewer');
    for (let i = 0; i < 5; i++) {
      const r = await signInFrom(server.baseUrl, '127.0.0.21', rv.email, `wrong-guess-${i}-x`, { 'x-forwarded-for': `198.51.100.${i}` });
      expect(r.status).toBe(401);
    }
    const forged = await signInFrom(server.baseUrl, '127.0.0.21', rv.email, 'wrong-again-xx', { 'x-forwarded-for': '198.51.100.99' });
    expect(forged.status).toBe(429);
  });

  it('spraying many accounts from one address gets that address a growing wait', async () => {
    let firstBlocked = -1;
    for (let i = 0; i < 25 && firstBlocked < 0; i++) {
      const r = await signInFrom(server.baseUrl, '127.0.0.31', `nobody${i}@spray.example`, 'wrong-guess-xyz');
      if (r.status === 429) firstBlocked = i;
      else expect(r.status).toBe(401);
    }
    expect(firstBlocked).toBe(20);
  });

  it('limits sign-ups per address (every attempt counts)', async () => {
    const statuses: number[] = [];
    for (let i = 0; i < 4; i++) {
      const r = await rawRequest(server.baseUrl, '/api/v1/auth/sign-up', {
        method: 'POST',
        from: '127.0.0.41',
        headers: { origin: server.baseUrl },
        json: { name: `Signup ${i}`, email: `signup${i}@larkspur-test.example`, password: 'moss-tulip-quarry-49' },
      });
      statuses.push(r.status);
    }
    expect(statuses).toEqual([201, 201, 201, 429]);
    // another address may still sign up
    const other = await rawRequest(server.baseUrl, '/api/v1/auth/sign-up', {
      method: 'POST',
      from: '127.0.0.42',
      headers: { origin: server.baseUrl },
      json: { name: 'Other', email: 'other@larkspur-test.example', password: 'moss-tulip-quarry-49' },
    });
    expect(other.status).toBe(201);
  });

  it('the waits hold across a restart (they live in the database)', async () => {
    await server.stop();
    server = await startTestServer({ env });
    const pe = byRole('process_engineer');
    const stillBlocked = await signInFrom(server.baseUrl, '127.0.0.11', pe.email, DEMO_PASSWORD_DEFAULT);
    expect(stillBlocked.status).toBe(429);
    expect((await signInFrom(server.baseUrl, '127.0.0.31', 'nobody99@spray.example', 'x-wrong-guess')).status).toBe(429);
    const signup = await rawRequest(server.baseUrl, '/api/v1/auth/sign-up', {
      method: 'POST',
      from: '127.0.0.41',
      headers: { origin: server.baseUrl },
      json: { name: 'After restart', email: 'after.restart@larkspur-test.example', password: 'moss-tulip-quarry-49' },
    });
    expect(signup.status).toBe(429);
  });
});
