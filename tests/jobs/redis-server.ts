/**
 * A throwaway redis-server for tests: its own process on a free loopback port, data in a temp folder, no
 * persistence, stopped (and its folder removed) by stop(). `.ci/run` installs Debian's redis-server; locally run
 * `apt-get install -y redis-server`.
 */
import { spawn, spawnSync, type ChildProcess } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { createConnection } from 'node:net';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { freePort } from '../support/server';

export type TestRedis = { url: string; port: number; stop: () => Promise<void> };

export function redisServerBinary(): string | null {
  for (const p of [process.env.REDIS_SERVER_BIN, '/usr/bin/redis-server', '/usr/local/bin/redis-server']) {
    if (p && spawnSync(p, ['--version']).status === 0) return p;
  }
  return null;
}

export async function startTestRedis(): Promise<TestRedis> {
  const bin = redisServerBinary();
  if (!bin) throw new Error('redis-server is not installed (apt-get install -y redis-server; .ci/run does this)');
  const dir = mkdtempSync(path.join(tmpdir(), 'trenchant-redis-'));
  const port = await freePort();
  const child = spawn(bin, ['--port', String(port), '--bind', '127.0.0.1', '--dir', dir, '--save', '', '--appendonly', 'no', '--daemonize', 'no', '--protected-mode', 'yes'], {
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  let output = '';
  child.stdout?.on('data', (d: Buffer) => (output += d.toString()));
  child.stderr?.on('data', (d: Buffer) => (output += d.toString()));
  const stop = async () => {
    await stopChild(child);
    rmSync(dir, { recursive: true, force: true });
  };
  const deadline = Date.now() + 10_000;
  while (!(await answersPing(port))) {
    if (child.exitCode !== null || Date.now() > deadline) {
      await stop();
      throw new Error(`redis-server did not start on port ${port}:\n${output.slice(-2000)}`);
    }
    await new Promise((r) => setTimeout(r, 50));
  }
  return { url: `redis://127.0.0.1:${port}`, port, stop };
}

function answersPing(port: number): Promise<boolean> {
  return new Promise((resolve) => {
    const socket = createConnection({ host: '127.0.0.1', port });
    const done = (ok: boolean) => {
      socket.destroy();
      resolve(ok);
    };
    socket.setTimeout(1000, () => done(false));
    socket.once('error', () => done(false));
    socket.once('connect', () => socket.write('PING\r\n'));
    socket.once('data', (d) => done(d.toString().startsWith('+PONG')));
  });
}

export function stopChild(child: ChildProcess, signal: NodeJS.Signals = 'SIGTERM'): Promise<void> {
  if (child.exitCode !== null || child.signalCode !== null) return Promise.resolve();
  return new Promise((resolve) => {
    const killer = setTimeout(() => child.kill('SIGKILL'), 10_000);
    child.once('exit', () => {
      clearTimeout(killer);
      resolve();
    });
    child.kill(signal);
  });
}
