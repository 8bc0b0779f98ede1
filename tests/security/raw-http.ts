/**
 * HTTP requests with full control over the connection for the security tests: the local address the socket
 * binds to (all of 127.0.0.0/8 reaches the loopback server, so tests can act as several client addresses), and
 * headers fetch() will not send (Host).
 */
import http from 'node:http';

export type RawResponse = { status: number; headers: http.IncomingHttpHeaders; body: string; setCookies: string[] };

export type RawInit = {
  method?: string;
  headers?: Record<string, string>;
  json?: unknown;
  /** bind the client socket to this loopback address, e.g. '127.0.0.7' */
  from?: string;
};

export function rawRequest(baseUrl: string, path: string, init: RawInit = {}): Promise<RawResponse> {
  const url = new URL(path, baseUrl);
  const body = init.json !== undefined ? JSON.stringify(init.json) : undefined;
  const headers: Record<string, string> = { ...init.headers };
  if (body !== undefined) {
    headers['content-type'] = 'application/json';
    headers['content-length'] = String(Buffer.byteLength(body));
  }
  return new Promise((resolve, reject) => {
    const req = http.request(
      { hostname: url.hostname, port: url.port, path: `${url.pathname}${url.search}`, method: init.method ?? 'GET', headers, localAddress: init.from, agent: false },
      (res) => {
        const chunks: Buffer[] = [];
        res.on('data', (c: Buffer) => chunks.push(c));
        res.on('end', () =>
          resolve({
            status: res.statusCode ?? 0,
            headers: res.headers,
            body: Buffer.concat(chunks).toString('utf8'),
            setCookies: res.headers['set-cookie'] ?? [],
          }),
        );
        res.on('error', reject);
      },
    );
    req.setTimeout(30_000, () => req.destroy(new Error(`timeout: ${init.method ?? 'GET'} ${path}`)));
    req.on('error', reject);
    if (body !== undefined) req.write(body);
    req.end();
  });
}

/** Sign-in attempt through the JSON API from one client address. */
export function signInFrom(baseUrl: string, from: string, email: string, password: string, extraHeaders: Record<string, string> = {}) {
  return rawRequest(baseUrl, '/api/v1/auth/session', {
    method: 'POST',
    from,
    json: { email, password },
    headers: { origin: baseUrl, ...extraHeaders },
  });
}
