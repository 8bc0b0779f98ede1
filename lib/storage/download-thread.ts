/**
 * Downloads of S3 objects into the read cache, on one long-lived download thread per process, so that one download
 * can be awaited by asynchronous readers and waited for by synchronous ones alike (the per-opening column file is
 * read with positional reads from code that is synchronous all the way up: lib/jobs/feature-columns.ts). The thread
 * keeps one SDK client per configuration and runs its downloads concurrently; each streams the body to a temporary
 * file beside the destination (named as place-file.ts names them) and renames it into place, so no thread holds the object in memory and a failed
 * download leaves no partial file under the destination's name. Each outcome is written to memory shared with the
 * caller (Atomics.wait for synchronous waiters) and posted (for the promise). The thread keeps the process alive
 * only while downloads are running; if it stops, its downloads fail and the next download starts a new one.
 */
import path from 'node:path';
import { Worker } from 'node:worker_threads';
import { tempNameBeside } from './place-file';
import type { S3Config } from './s3-config';
import { StorageNotFoundError } from './types';

// Plain JavaScript for an eval worker (no bundler sees it): the SDK is loaded from the project's node_modules.
const WORKER_SOURCE = `
const { workerData, parentPort } = require('node:worker_threads');
const { createRequire } = require('node:module');
const fs = require('node:fs');
const { pipeline } = require('node:stream/promises');
const req = createRequire(workerData.requireFrom);
let sdk = null;
const clients = new Map();
const clientFor = (options) => {
  const id = JSON.stringify(options);
  let c = clients.get(id);
  if (!c) {
    sdk = sdk || req('@aws-sdk/client-s3');
    c = new sdk.S3Client(options);
    clients.set(id, c);
  }
  return c;
};
parentPort.on('message', (job) => {
  const state = new Int32Array(job.shared, 0, 2);
  const text = new Uint8Array(job.shared, 8);
  const finish = (code, message) => {
    const bytes = Buffer.from(String(message).slice(0, 2000));
    const n = Math.min(bytes.length, text.length);
    text.set(bytes.subarray(0, n));
    Atomics.store(state, 1, n);
    Atomics.store(state, 0, code);
    Atomics.notify(state, 0);
    parentPort.postMessage(job.id);
  };
  (async () => {
    const client = clientFor(job.client);
    const res = await client.send(new sdk.GetObjectCommand({ Bucket: job.bucket, Key: job.key }));
    await pipeline(res.Body, fs.createWriteStream(job.tmp));
    // Whole-second modification time (read-cache.ts settleTimes): marking use later keeps it exactly.
    fs.utimesSync(job.tmp, new Date(), Math.floor(fs.statSync(job.tmp).mtimeMs / 1000));
    fs.renameSync(job.tmp, job.dest);
  })().then(
    () => finish(1, ''),
    (err) => {
      try { fs.unlinkSync(job.tmp); } catch {}
      const missing = err && (err.name === 'NoSuchKey' || err.name === 'NotFound' || (err.$metadata && err.$metadata.httpStatusCode === 404));
      finish(missing ? 3 : 2, (err && err.message) || String(err));
    },
  );
});
`;

type Pending = { settle: () => void; fail: (err: Error) => void };
let thread: { worker: Worker; pending: Map<number, Pending> } | null = null;
let nextId = 1;

function downloadThread(): NonNullable<typeof thread> {
  if (thread) return thread;
  const requireFrom = path.join(process.env.TRENCHANT_ROOT ?? process.cwd(), 'package.json');
  const worker = new Worker(WORKER_SOURCE, { eval: true, workerData: { requireFrom }, stdout: false, stderr: false });
  worker.unref(); // kept alive only while downloads are awaited (ref() below)
  const t = { worker, pending: new Map<number, Pending>() };
  worker.on('message', (id: number) => {
    const p = t.pending.get(id);
    t.pending.delete(id);
    if (t.pending.size === 0) worker.unref();
    p?.settle();
  });
  const stopped = (why: string) => {
    if (thread === t) thread = null;
    for (const p of t.pending.values()) p.fail(new Error(why));
    t.pending.clear();
  };
  worker.on('error', (err) => stopped(`the download thread failed: ${err.message}`));
  worker.on('exit', () => stopped('the download thread stopped'));
  thread = t;
  return t;
}

const RUNNING = 0;
const OK = 1;
const NOT_FOUND = 3;

export type Download = {
  /** Settles when the file is in place (or the download failed). */
  readonly done: Promise<void>;
  /** True once the download ended, well or not. */
  settled(): boolean;
  /** Blocks this thread until the download ends; throws as `done` rejects. */
  waitSync(timeoutMs?: number): void;
};

/**
 * Starts downloading object `key` (without the bucket prefix) to `dest`, whose folder must exist. Throws (from
 * `done` / waitSync) StorageNotFoundError when the object is absent.
 */
export function startDownload(config: S3Config, key: string, dest: string): Download {
  const shared = new SharedArrayBuffer(8 + 2048);
  const state = new Int32Array(shared, 0, 2);
  const tmp = tempNameBeside(dest, 'dl');
  const t = downloadThread();
  const id = nextId++;
  const outcome = (): Error | null => {
    const code = Atomics.load(state, 0);
    if (code === OK) return null;
    if (code === NOT_FOUND) return new StorageNotFoundError(key, `s3://${config.bucket}/${config.prefix}`);
    const message = Buffer.from(new Uint8Array(shared, 8, Atomics.load(state, 1))).toString();
    return new Error(`could not download ${key} from object storage: ${message || 'the download thread stopped'}`);
  };
  const done = new Promise<void>((resolve, reject) => {
    t.pending.set(id, {
      settle: () => {
        const err = outcome();
        if (err) reject(err);
        else resolve();
      },
      fail: (err) => reject(new Error(`could not download ${key} from object storage: ${err.message}`)),
    });
  });
  t.worker.ref();
  t.worker.postMessage({ id, shared, client: config.client, bucket: config.bucket, key: config.prefix + key, dest, tmp });
  done.catch(() => undefined); // a waitSync caller sees the error; no unhandled rejection when nobody awaits
  return {
    done,
    settled: () => Atomics.load(state, 0) !== RUNNING,
    waitSync(timeoutMs = 120_000) {
      const waited = Atomics.wait(state, 0, RUNNING, timeoutMs);
      if (waited === 'timed-out' && Atomics.load(state, 0) === RUNNING) {
        throw new Error(`downloading ${key} from object storage took longer than ${Math.round(timeoutMs / 1000)} s`);
      }
      const err = outcome();
      if (err) throw err;
    },
  };
}
