/** The counting proxy (counting-proxy.mjs) in its own process, with typed control calls. */
import { spawn } from 'node:child_process';
import path from 'node:path';
import { createInterface } from 'node:readline';

export type SeenRequest = { method: string; path: string };
export type CountingProxy = {
  endpoint: string;
  requests: () => Promise<SeenRequest[]>;
  /** Requests of `method` whose path ends with `/key` (the bucket and any prefix in front). */
  count: (method: string, key?: string) => Promise<number>;
  reset: () => Promise<void>;
  cutNextGet: (afterBytes: number) => Promise<void>;
  delayGets: (ms: number) => Promise<void>;
  delayBodies: (ms: number, match?: string) => Promise<void>;
  failWrites: (match: string) => Promise<void>;
  stop: () => void;
};

export async function startCountingProxy(upstream: string): Promise<CountingProxy> {
  const child = spawn(process.execPath, [path.join(import.meta.dirname, 'counting-proxy.mjs'), upstream], { stdio: ['ignore', 'pipe', 'inherit'] });
  const line = await new Promise<string>((resolve, reject) => {
    createInterface({ input: child.stdout! }).once('line', resolve);
    child.once('exit', (code) => reject(new Error(`counting proxy exited with ${code}`)));
  });
  const { endpoint } = JSON.parse(line) as { endpoint: string };
  const call = async (p: string, method = 'POST') => {
    const res = await fetch(`${endpoint}/__proxy/${p}`, { method });
    return res.json() as Promise<unknown>;
  };
  const requests = async () => (await call('requests', 'GET')) as SeenRequest[];
  return {
    endpoint,
    requests,
    count: async (method, key) => (await requests()).filter((r) => r.method === method && (key === undefined || r.path.endsWith(`/${key}`))).length,
    reset: async () => void (await call('reset')),
    cutNextGet: async (after) => void (await call(`cut-next-get?after=${after}`)),
    delayGets: async (ms) => void (await call(`delay?ms=${ms}`)),
    delayBodies: async (ms, match = '') => void (await call(`delay-body?ms=${ms}&match=${encodeURIComponent(match)}`)),
    failWrites: async (match) => void (await call(`fail-writes?match=${encodeURIComponent(match)}`)),
    stop: () => void child.kill('SIGTERM'),
  };
}
