// `npm start`: build if .next is missing or older than the sources, then serve on 127.0.0.1:3000 (PORT and
// HOST override). The database is migrated and, when empty, seeded with the demo by instrumentation.ts.
import { spawn } from 'node:child_process';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { buildIfStale } from './build-if-stale.mjs';

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');
process.env.NEXT_TELEMETRY_DISABLED = '1';

try {
  buildIfStale(root);
} catch (error) {
  console.error(`[trenchant] ${error instanceof Error ? error.message : String(error)}`);
  process.exit(1);
}

const port = process.env.PORT ?? '3000';
const host = process.env.HOST ?? '127.0.0.1';
// Links in mail are built from TRENCHANT_PUBLIC_URL only, and the production server refuses to start without it.
// For the local demo on a loopback address the default is this server's own loopback URL; anywhere else the
// address people reach the server at cannot be guessed, so it must be set.
if (!process.env.TRENCHANT_PUBLIC_URL) {
  const loopback = ['127.0.0.1', 'localhost', '::1'].includes(host) || host.startsWith('127.');
  if (!loopback) {
    console.error(`[trenchant] HOST=${host} is not a loopback address: set TRENCHANT_PUBLIC_URL to the URL people open Trenchant at (e.g. https://trenchant.example.com).`);
    process.exit(1);
  }
  const urlHost = host === '::1' ? '[::1]' : host === '127.0.0.1' ? 'localhost' : host;
  process.env.TRENCHANT_PUBLIC_URL = `http://${urlHost}:${port}`;
  console.log(`[trenchant] TRENCHANT_PUBLIC_URL not set; links in mail use ${process.env.TRENCHANT_PUBLIC_URL}`);
}
// Started as `node .../next start` so this child's pid is the server itself (npx would leave it orphaned).
const server = spawn(process.execPath, [path.join(root, 'node_modules', 'next', 'dist', 'bin', 'next'), 'start', '-H', host, '-p', port], {
  cwd: root,
  stdio: 'inherit',
  env: process.env,
});
for (const signal of ['SIGINT', 'SIGTERM']) {
  process.on(signal, () => server.kill(signal));
}
server.on('exit', (code, signal) => process.exit(code ?? (signal ? 1 : 0)));
