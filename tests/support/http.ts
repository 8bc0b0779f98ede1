/**
 * A tiny cookie-keeping HTTP client for tests against a started server. Non-GET requests carry the site's own
 * Origin header, as a browser would, so the cross-site check passes; pass `origin` to simulate another site.
 */
export class TestClient {
  private cookies = new Map<string, string>();

  constructor(readonly baseUrl: string) {}

  async request(path: string, init: RequestInit & { json?: unknown; origin?: string | null } = {}): Promise<Response> {
    const { json, origin, ...rest } = init;
    const headers = new Headers(rest.headers);
    const method = (rest.method ?? 'GET').toUpperCase();
    if (method !== 'GET' && method !== 'HEAD' && origin !== null) headers.set('origin', origin ?? this.baseUrl);
    if (json !== undefined) headers.set('content-type', 'application/json');
    if (this.cookies.size > 0) headers.set('cookie', [...this.cookies].map(([k, v]) => `${k}=${v}`).join('; '));
    const res = await fetch(`${this.baseUrl}${path}`, {
      ...rest,
      method,
      headers,
      body: json !== undefined ? JSON.stringify(json) : rest.body,
      redirect: 'manual',
    });
    for (const line of res.headers.getSetCookie()) {
      const [pair] = line.split(';');
      const eq = pair?.indexOf('=') ?? -1;
      if (!pair || eq < 0) continue;
      const name = pair.slice(0, eq).trim();
      const value = pair.slice(eq + 1).trim();
      if (value === '' || /max-age=0/i.test(line)) this.cookies.delete(name);
      else this.cookies.set(name, value);
    }
    return res;
  }

  get(path: string) {
    return this.request(path);
  }

  post(path: string, json?: unknown, extra: { origin?: string | null } = {}) {
    return this.request(path, { method: 'POST', json, ...extra });
  }

  patch(path: string, json?: unknown) {
    return this.request(path, { method: 'PATCH', json });
  }

  hasSession(): boolean {
    return this.cookies.has('trenchant_session');
  }
}

/** Signs in through the JSON API; throws with the server's message when it fails. */
export async function signIn(baseUrl: string, email: string, password: string): Promise<TestClient> {
  const client = new TestClient(baseUrl);
  const res = await client.post('/api/v1/auth/session', { email, password });
  if (res.status !== 200) throw new Error(`sign-in as ${email} failed: ${res.status} ${await res.text()}`);
  return client;
}
