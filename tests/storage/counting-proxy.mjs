// An HTTP proxy in front of the fake S3 server that counts the requests passing through it, for tests that must
// show how often the bucket is asked (a cache hit makes no GET; concurrent cold reads make one). It can also cut
// the next object GET short (headers and part of the body, then the connection drops) to test failed downloads.
// Runs in its own process (`node counting-proxy.mjs <upstream>`, prints {"endpoint": ...}): the synchronous read
// path blocks the test's thread while it waits. Control routes, answered here and not counted:
//   GET  /__proxy/requests          [{ method, path }] seen so far
//   POST /__proxy/reset             forget them
//   POST /__proxy/cut-next-get?after=N   the next GET of an object sends N body bytes, then the socket is destroyed
//   POST /__proxy/delay?ms=N        every GET waits N ms before it is forwarded
//   POST /__proxy/delay-body?ms=N&match=S   the body of a GET whose path contains S is held N ms after its headers
//   POST /__proxy/fail-writes?match=S   PUT/POST requests whose path contains S get a 500 InternalError (empty S: none)
import http from 'node:http';

const upstream = new URL(process.argv[2] ?? '');
let seen = [];
let cutAfter = null;
let delayMs = 0;
let bodyDelayMs = 0;
let bodyDelayMatch = '';
let failWrites = '';

const server = http.createServer((req, res) => {
  const url = new URL(req.url ?? '/', 'http://proxy');
  if (url.pathname.startsWith('/__proxy/')) {
    if (url.pathname === '/__proxy/requests') res.end(JSON.stringify(seen));
    else if (url.pathname === '/__proxy/reset') (seen = []), res.end('{}');
    else if (url.pathname === '/__proxy/cut-next-get') (cutAfter = Number(url.searchParams.get('after') ?? 0)), res.end('{}');
    else if (url.pathname === '/__proxy/delay') (delayMs = Number(url.searchParams.get('ms') ?? 0)), res.end('{}');
    else if (url.pathname === '/__proxy/delay-body') (bodyDelayMs = Number(url.searchParams.get('ms') ?? 0)), (bodyDelayMatch = url.searchParams.get('match') ?? ''), res.end('{}');
    else if (url.pathname === '/__proxy/fail-writes') (failWrites = url.searchParams.get('match') ?? ''), res.end('{}');
    else (res.statusCode = 404), res.end('{}');
    return;
  }
  seen.push({ method: req.method, path: url.pathname });
  if (failWrites && (req.method === 'PUT' || req.method === 'POST') && url.pathname.includes(failWrites)) {
    req.resume();
    res.writeHead(500, { 'content-type': 'application/xml' });
    res.end('<?xml version="1.0" encoding="UTF-8"?><Error><Code>InternalError</Code><Message>injected by the test proxy</Message></Error>');
    return;
  }
  const cut = req.method === 'GET' && cutAfter !== null && url.pathname.split('/').filter(Boolean).length > 1 ? cutAfter : null;
  if (cut !== null) cutAfter = null;
  const forward = () => {
    const out = http.request({ host: upstream.hostname, port: upstream.port, method: req.method, path: req.url, headers: req.headers }, (up) => {
      res.writeHead(up.statusCode ?? 502, up.headers);
      if (cut === null) {
        if (req.method === 'GET' && bodyDelayMs > 0 && url.pathname.includes(bodyDelayMatch)) {
          up.pause();
          setTimeout(() => up.pipe(res), bodyDelayMs);
        } else up.pipe(res);
        return;
      }
      let sent = 0;
      up.on('data', (chunk) => {
        if (sent >= cut) return;
        const part = chunk.subarray(0, cut - sent);
        sent += part.length;
        res.write(part);
        if (sent >= cut) {
          up.destroy();
          setTimeout(() => res.socket?.destroy(), 20);
        }
      });
      up.on('end', () => res.socket?.destroy());
    });
    out.on('error', () => res.socket?.destroy());
    req.pipe(out);
  };
  if (req.method === 'GET' && delayMs > 0) setTimeout(forward, delayMs);
  else forward();
});
server.listen(0, '127.0.0.1', () => {
  const { port } = server.address();
  console.log(JSON.stringify({ endpoint: `http://127.0.0.1:${port}` }));
});
process.on('SIGTERM', () => server.close(() => process.exit(0)));
