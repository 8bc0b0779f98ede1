/**
 * A bounded loopback load for a started test server: `clients` concurrent loops request pages and API routes
 * (signed in as the demo roles) for `durationMs`, while upload bombs are sent alongside. Used by the load test
 * (tests/pipeline-server/load.test.ts: every request answered, every bomb refused) and by the benchmark
 * (bench/load.bench.ts: latency percentiles).
 */
import { spawn } from 'node:child_process';
import { DEMO_PASSWORD_DEFAULT } from '@/lib/data/demo';
import type { TestClient } from '../support/http';
import { PROJECT, signInAs, upload } from './support';

export type LoadSample = { path: string; status: number; ms: number };
export type BombSample = { status: number; ms: number; message: string };
export type UploadSample = { name: string; status: number; ms: number };
export type LoadResult = { samples: LoadSample[]; bombs: BombSample[]; uploads: UploadSample[]; wallMs: number };

export const LOAD_PATHS = ['/projects', `/projects/${PROJECT}`, '/methods', '/api/v1/me', `/api/v1/projects/${PROJECT}/layouts`, `/api/v1/projects/${PROJECT}/analyses`];

export async function runLoad(
  baseUrl: string,
  opts: {
    clients: number;
    durationMs: number;
    bomb: Uint8Array;
    bombs: number;
    /** Uploads sent from this process alongside the load. */
    uploads?: { name: string; bytes: Uint8Array | string }[];
    /** Files uploaded by a curl child process, so sending a big body does not stall this process's timings. */
    curlUploads?: { name: string; file: string }[];
  },
): Promise<LoadResult> {
  const roles = ['designer', 'process_engineer', 'reviewer', 'admin'] as const;
  const sessions: TestClient[] = [];
  for (const role of roles) sessions.push(await signInAs(baseUrl, role));
  const uploader = sessions[0] as TestClient;
  // Warm every route once (first hits compile nothing under next start, but fill caches and open the DB).
  for (const p of LOAD_PATHS) await (await uploader.get(p)).arrayBuffer();

  const samples: LoadSample[] = [];
  const bombs: BombSample[] = [];
  const uploads: UploadSample[] = [];
  const t0 = performance.now();
  const until = t0 + opts.durationMs;
  const loop = async (k: number) => {
    const client = sessions[k % sessions.length] as TestClient;
    let n = k;
    while (performance.now() < until) {
      const path = LOAD_PATHS[n++ % LOAD_PATHS.length] as string;
      const t = performance.now();
      const res = await client.get(path);
      await res.arrayBuffer();
      samples.push({ path, status: res.status, ms: performance.now() - t });
    }
  };
  const bomber = async () => {
    for (let b = 0; b < opts.bombs; b++) {
      const t = performance.now();
      const res = await upload(uploader, `/api/v1/projects/${PROJECT}/layouts`, opts.bomb, 'bomb.gds', { name: `bomb ${b}` });
      const body = (await res.json().catch(() => ({}))) as { error?: { message?: string } };
      bombs.push({ status: res.status, ms: performance.now() - t, message: body.error?.message ?? '' });
    }
  };
  // Large legitimate uploads (e.g. a big CSV) alongside, from another session.
  const uploader2 = sessions[3] as TestClient;
  const bigUploads = async () => {
    for (const u of opts.uploads ?? []) {
      const t = performance.now();
      const res = await upload(uploader2, `/api/v1/projects/${PROJECT}/layouts`, u.bytes, u.name, { name: u.name });
      await res.arrayBuffer();
      uploads.push({ name: u.name, status: res.status, ms: performance.now() - t });
    }
  };
  const cookie = opts.curlUploads?.length ? await sessionCookie(baseUrl, 'admin@larkspur.example') : '';
  const curlUploads = async () => {
    for (const u of opts.curlUploads ?? []) {
      const t = performance.now();
      const status = await curlUpload(baseUrl, cookie, u.file, u.name);
      uploads.push({ name: u.name, status, ms: performance.now() - t });
    }
  };
  await Promise.all([...Array.from({ length: opts.clients }, (_, k) => loop(k)), bomber(), bigUploads(), curlUploads()]);
  return { samples, bombs, uploads, wallMs: performance.now() - t0 };
}

export function percentile(values: number[], p: number): number {
  if (values.length === 0) return Number.NaN;
  const sorted = [...values].sort((a, b) => a - b);
  return sorted[Math.min(sorted.length - 1, Math.ceil((p / 100) * sorted.length) - 1)] as number;
}

/** Session cookie ("name=value") of a demo user, from the JSON sign-in. */
async function sessionCookie(baseUrl: string, email: string): Promise<string> {
  const res = await fetch(`${baseUrl}/api/v1/auth/session`, {
    method: 'POST',
    headers: { 'content-type': 'application/json', origin: baseUrl },
    body: JSON.stringify({ email, password: DEMO_PASSWORD_DEFAULT }),
  });
  const line = res.headers.getSetCookie().find((l) => l.startsWith('trenchant_session='));
  if (res.status !== 200 || !line) throw new Error(`sign-in for the curl upload failed: ${res.status}`);
  return line.split(';')[0] as string;
}

/** Multipart upload of a file by curl; resolves the HTTP status. */
function curlUpload(baseUrl: string, cookie: string, file: string, name: string): Promise<number> {
  return new Promise((resolve, reject) => {
    const args = ['-s', '-o', '/dev/null', '-w', '%{http_code}', '-H', `cookie: ${cookie}`, '-H', `origin: ${baseUrl}`, '-F', `name=${name}`, '-F', `file=@${file}`, `${baseUrl}/api/v1/projects/${PROJECT}/layouts`];
    const child = spawn('curl', args, { stdio: ['ignore', 'pipe', 'inherit'] });
    let out = '';
    child.stdout.on('data', (d: Buffer) => (out += d.toString()));
    child.on('error', reject);
    child.on('close', () => resolve(Number(out.trim())));
  });
}
