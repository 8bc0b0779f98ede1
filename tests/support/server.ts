/**
 * Starts the built Trenchant app for integration and browser tests: builds it first when stale (shared lock,
 * so parallel test files build once), then runs `next start` on 127.0.0.1 with a fresh temporary database,
 * its own development-SMTP port and the demo seeded. Each test file gets its own server and database:
 *
 *   let server: TestServer;
 *   beforeAll(async () => { server = await startTestServer(); });
 *   afterAll(() => server?.stop());
 *
 * Set TRENCHANT_TEST_SKIP_BUILD=1 to use whatever .next holds.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { createServer } from 'node:net';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { buildIfStale } from '../../scripts/build-if-stale.mjs';

export const PROJECT_ROOT = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..', '..');

export type TestServer = {
  /** e.g. http://127.0.0.1:43817 (no trailing slash) */
  baseUrl: string;
  /** the SQLite file this server uses (inside `dataDir`) */
  dbFile: string;
  /** temporary folder removed by stop() */
  dataDir: string;
  /** port of the built-in development SMTP server */
  smtpPort: number;
  /** everything the server printed so far */
  output: () => string;
  stop: () => Promise<void>;
};

export type StartOptions = {
  /** extra environment for the server (e.g. TRENCHANT_DEMO: '0' for an empty instance) */
  env?: Record<string, string>;
  /** how long to wait for the server to answer, ms */
  readyTimeoutMs?: number;
};

/** A TCP port that was free a moment ago on 127.0.0.1. */
export function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const srv = createServer();
    srv.once('error', reject);
    srv.listen(0, '127.0.0.1', () => {
      const address = srv.address();
      const port = typeof address === 'object' && address ? address.port : 0;
      srv.close(() => resolve(port));
    });
  });
}

/** Builds the app if .next is missing or older than the sources (no-op with TRENCHANT_TEST_SKIP_BUILD=1). */
export function ensureBuilt(): void {
  if (process.env.TRENCHANT_TEST_SKIP_BUILD === '1') return;
  buildIfStale(PROJECT_ROOT, { stdio: 'pipe', rememberFailure: true, log: (line) => console.log(line) });
}

/** Thrown when the port picked by freePort was taken by another process before the server could listen on it. */
class PortTakenError extends Error {}

export async function startTestServer(options: StartOptions = {}): Promise<TestServer> {
  // freePort can only say a port was free a moment ago: with many test files starting servers, fake S3 and Redis at
  // once, another process may bind it first. Then start again on fresh ports.
  for (let attempt = 1; ; attempt++) {
    try {
      return await startOnce(options);
    } catch (error) {
      if (!(error instanceof PortTakenError) || attempt >= 3) throw error;
    }
  }
}

async function startOnce(options: StartOptions): Promise<TestServer> {
  ensureBuilt();
  const dataDir = mkdtempSync(path.join(tmpdir(), 'trenchant-it-'));
  const dbFile = path.join(dataDir, 'trenchant.db');
  const [port, smtpPort] = [await freePort(), await freePort()];
  const env: NodeJS.ProcessEnv = {
    ...process.env,
    NODE_ENV: 'production',
    NEXT_TELEMETRY_DISABLED: '1',
    TRENCHANT_DB: dbFile,
    TRENCHANT_FAKE_SMTP_PORT: String(smtpPort),
    ...options.env,
  };
  delete env.SMTP_URL;
  // Like `npm start` on loopback: mail links point at this server unless a test sets its own value ('' = unset).
  env.TRENCHANT_PUBLIC_URL = options.env?.TRENCHANT_PUBLIC_URL ?? `http://127.0.0.1:${port}`;
  if (env.TRENCHANT_PUBLIC_URL === '') delete env.TRENCHANT_PUBLIC_URL;
  const child = spawn(
    process.execPath,
    [path.join(PROJECT_ROOT, 'node_modules', 'next', 'dist', 'bin', 'next'), 'start', '-H', '127.0.0.1', '-p', String(port)],
    { cwd: PROJECT_ROOT, env, stdio: ['ignore', 'pipe', 'pipe'] },
  );
  let output = '';
  child.stdout?.on('data', (d: Buffer) => (output += d.toString()));
  child.stderr?.on('data', (d: Buffer) => (output += d.toString()));
  const baseUrl = `http://127.0.0.1:${port}`;
  const stop = async () => {
    await stopChild(child);
    rmSync(dataDir, { recursive: true, force: true });
  };
  try {
    await waitUntilReady(baseUrl, child, options.readyTimeoutMs ?? 60_000, () => output);
  } catch (error) {
    await stop();
    throw error;
  }
  return { baseUrl, dbFile, dataDir, smtpPort, output: () => output, stop };
}

async function waitUntilReady(baseUrl: string, child: ChildProcess, timeoutMs: number, output: () => string): Promise<void> {
  const deadline = Date.now() + timeoutMs;
  while (Date.now() < deadline) {
    if (/EADDRINUSE/.test(output())) throw new PortTakenError(`${baseUrl} was taken by another process:\n${output().slice(-1000)}`);
    if (child.exitCode !== null) throw new Error(`next start exited with ${child.exitCode}:\n${output().slice(-3000)}`);
    try {
      const res = await fetch(`${baseUrl}/api/v1/auth/session`, { signal: AbortSignal.timeout(5000) });
      if (res.status === 401 || res.status === 200) return;
    } catch {
      // not listening yet
    }
    await new Promise((r) => setTimeout(r, 150));
  }
  throw new Error(`server at ${baseUrl} did not answer within ${timeoutMs} ms:\n${output().slice(-3000)}`);
}

function stopChild(child: ChildProcess): Promise<void> {
  if (child.exitCode !== null || child.signalCode !== null) return Promise.resolve();
  return new Promise((resolve) => {
    const killer = setTimeout(() => child.kill('SIGKILL'), 5000);
    child.once('exit', () => {
      clearTimeout(killer);
      resolve();
    });
    child.kill('SIGTERM');
  });
}
