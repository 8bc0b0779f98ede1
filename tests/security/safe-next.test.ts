import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DEMO_PASSWORD_DEFAULT, DEMO_USERS } from '@/lib/data/demo';
import { DEFAULT_NEXT_PATH, safeNextPath } from '@/lib/http/safe-next';
import { signIn, TestClient } from '../support/http';
import { startTestServer, type TestServer } from '../support/server';

// Hostile `next` values as they arrive after the query string is decoded once (what Next hands the page and
// what the form posts back). Sources: the WHATWG URL standard (tab/newline stripping, "\" as "/" in special
// schemes, scheme-relative "//"), and the usual open-redirect payload lists (common practice, no single source).
const HOSTILE: [string, string][] = [
  ['tab between slashes (issue 15)', '/\t/evil.example'],
  ['newline between slashes', '/\n/evil.example'],
  ['carriage return between slashes', '/\r/evil.example'],
  ['newline at the end (header injection)', '/projects\r\nSet-Cookie: x=1'],
  ['NUL', '/projects\u0000'],
  ['scheme-relative', '//evil.example'],
  ['scheme-relative with path', '//evil.example/projects'],
  ['slash backslash', '/\\evil.example'],
  ['backslash slash', '\\/evil.example'],
  ['backslashes only', '\\\\evil.example'],
  ['backslash later in the path', '/projects\\..\\..\\evil'],
  ['absolute http URL', 'http://evil.example/'],
  ['absolute https URL', 'https://evil.example'],
  ['javascript URL', 'javascript:alert(1)'],
  ['data URL', 'data:text/html,<script>alert(1)</script>'],
  ['no leading slash', 'evil.example'],
  ['encoded slashes', '/%2F/evil.example'],
  ['encoded second slash', '/%2fevil.example'],
  ['double-encoded slashes', '/%252F%252Fevil.example'],
  ['encoded backslash', '/%5Cevil.example'],
  ['encoded tab', '/%09/evil.example'],
  ['encoded newline', '/%0A/evil.example'],
  ['encoded carriage return', '/%0D/evil.example'],
  ['dot segments up to //', '/a/..//evil.example'],
  ['space before slashes', ' //evil.example'],
  ['ideographic space', '/\u3000/evil.example'],
  ['userinfo trick', '/@evil.example'.replace('/@', '//user@')],
  ['empty', ''],
  ['very long', `/${'a'.repeat(5000)}`],
];

describe('safeNextPath (unit)', () => {
  it.each(HOSTILE)('refuses %s', (_what, value) => {
    expect(safeNextPath(value)).toBe(DEFAULT_NEXT_PATH);
  });

  it.each([
    ['/projects', '/projects'],
    ['/teams/demo-team-larkspur', '/teams/demo-team-larkspur'],
    ['/projects/x?tab=layouts#top', '/projects/x?tab=layouts#top'],
    ['/invite/AbC_12-3', '/invite/AbC_12-3'],
    ['/projects/%C3%A9t%C3%A9', '/projects/%C3%A9t%C3%A9'],
  ])('keeps the same-origin path %s', (value, expected) => {
    expect(safeNextPath(value)).toBe(expected);
  });

  it('refuses non-strings', () => {
    expect(safeNextPath(undefined)).toBe(DEFAULT_NEXT_PATH);
    expect(safeNextPath(['/a', '/b'])).toBe(DEFAULT_NEXT_PATH);
    expect(safeNextPath(42)).toBe(DEFAULT_NEXT_PATH);
  });

  it('returns only printable ASCII (safe in a Location header)', () => {
    for (const v of ['/projects/é', '/a?q=ü', '/x#ß']) expect(safeNextPath(v)).toMatch(/^[\x21-\x7e]+$/);
  });
});

describe('sign-in page with hostile ?next= over HTTP', () => {
  let server: TestServer;
  let signedIn: TestClient;
  const designer = DEMO_USERS.find((u) => u.role === 'designer')!;
  beforeAll(async () => {
    server = await startTestServer();
    signedIn = await signIn(server.baseUrl, designer.email, DEMO_PASSWORD_DEFAULT);
  });
  afterAll(() => server?.stop());

  it.each(HOSTILE.filter(([, v]) => v.length < 100))('signed in: %s redirects to /projects, never off-site, never 500', async (_what, value) => {
    const res = await signedIn.get(`/sign-in?next=${encodeURIComponent(value)}`);
    expect(res.status).toBeGreaterThanOrEqual(300);
    expect(res.status).toBeLessThan(400);
    expect(res.headers.get('location')).toBe(DEFAULT_NEXT_PATH);
  });

  it.each([
    ['raw %09 from the issue', '/sign-in?next=%2F%09%2Fevil.example'],
    ['raw %0A', '/sign-in?next=%2F%0A%2Fevil.example'],
    ['raw %0D', '/sign-in?next=%2F%0D%2Fevil.example'],
    ['raw %0D%0A header injection', '/sign-in?next=%2Fprojects%0D%0ASet-Cookie%3A%20x%3D1'],
  ])('signed in: %s is answered with a redirect to /projects', async (_what, url) => {
    const res = await signedIn.get(url);
    expect([303, 307, 308]).toContain(res.status);
    expect(res.headers.get('location')).toBe(DEFAULT_NEXT_PATH);
  });

  it('signed out: the form carries only the sanitised value, and the page is not a 500', async () => {
    const anon = new TestClient(server.baseUrl);
    const res = await anon.get('/sign-in?next=%2F%0A%2Fevil.example');
    expect(res.status).toBe(200);
    const html = await res.text();
    expect(html).toMatch(/name="next" value="\/projects"/);
    // (the page's own URL appears in Next's flight data; no link, form or meta refresh may point there)
    expect(html).not.toMatch(/(href|action|content|value)="[^"]*evil\.example/);
  });

  it('a malformed escape gives a same-origin redirect, not a 500', async () => {
    const res = await signedIn.get('/sign-in?next=%2F%E0%A4%A');
    expect([303, 307, 308]).toContain(res.status);
    expect(res.headers.get('location')).toMatch(/^\/(?![/\\])[\x21-\x7e]*$/);
  });

  it('a good next survives', async () => {
    const res = await signedIn.get('/sign-in?next=%2Fteams%2Fdemo-team-larkspur');
    expect(res.headers.get('location')).toBe('/teams/demo-team-larkspur');
  });
});
