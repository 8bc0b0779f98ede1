/** Starts `npm run worker` processes (as `node --import tsx scripts/worker.ts`, so the pid is the worker itself). */
import { spawn, type ChildProcess } from 'node:child_process';
import path from 'node:path';
import { PROJECT_ROOT } from '../support/server';
import { stopChild } from './redis-server';

export type TestWorker = { name: string; child: ChildProcess; output: () => string; stop: () => Promise<void> };

export async function startWorker(name: string, env: Record<string, string>): Promise<TestWorker> {
  const child = spawn(process.execPath, ['--import', 'tsx', path.join('scripts', 'worker.ts')], {
    cwd: PROJECT_ROOT,
    env: { ...process.env, NODE_ENV: 'production', ...env },
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  let output = '';
  child.stdout?.on('data', (d: Buffer) => (output += d.toString()));
  child.stderr?.on('data', (d: Buffer) => (output += d.toString()));
  const deadline = Date.now() + 60_000;
  while (!output.includes('[trenchant] queue worker')) {
    if (child.exitCode !== null) throw new Error(`worker ${name} exited with ${child.exitCode}:\n${output.slice(-3000)}`);
    if (Date.now() > deadline) {
      child.kill('SIGKILL');
      throw new Error(`worker ${name} did not start:\n${output.slice(-3000)}`);
    }
    await new Promise((r) => setTimeout(r, 100));
  }
  return { name, child, output: () => output, stop: () => stopChild(child) };
}
