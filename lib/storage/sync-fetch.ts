/**
 * A blocking download of one S3 object to a local file, for the few synchronous readers (the per-opening column
 * file is read with positional reads from code that is synchronous all the way up: lib/jobs/feature-columns.ts).
 * A short-lived worker thread runs the SDK's asynchronous GET while this thread waits on a shared-memory flag.
 * Only a cold cache takes this path; read-cache.ts warms the cache asynchronously wherever it can.
 */
import path from 'node:path';
import { Worker } from 'node:worker_threads';
import type { S3Config } from './s3-config';
import { StorageNotFoundError } from './types';

// Plain JavaScript for an eval worker (no bundler sees it): the SDK is loaded from the project's node_modules.
const WORKER_SOURCE = `
const { workerData } = require('node:worker_threads');
const { createRequire } = require('node:module');
const fs = require('node:fs');
const { pipeline } = require('node:stream/promises');
const state = new Int32Array(workerData.shared, 0, 2);
const text = new Uint8Array(workerData.shared, 8);
const finish = (code, message) => {
  const bytes = Buffer.from(String(message).slice(0, 2000));
  const n = Math.min(bytes.length, text.length);
  text.set(bytes.subarray(0, n));
  Atomics.store(state, 1, n);
  Atomics.store(state, 0, code);
  Atomics.notify(state, 0);
};
(async () => {
  const req = createRequire(workerData.requireFrom);
  const { S3Client, GetObjectCommand } = req('@aws-sdk/client-s3');
  const client = new S3Client(workerData.client);
  try {
    const res = await client.send(new GetObjectCommand({ Bucket: workerData.bucket, Key: workerData.key }));
    await pipeline(res.Body, fs.createWriteStream(workerData.tmp));
    fs.renameSync(workerData.tmp, workerData.dest);
  } finally {
    client.destroy();
  }
})().then(
  () => finish(1, ''),
  (err) => {
    try { fs.unlinkSync(workerData.tmp); } catch {}
    const missing = err && (err.name === 'NoSuchKey' || err.name === 'NotFound' || (err.$metadata && err.$metadata.httpStatusCode === 404));
    finish(missing ? 3 : 2, (err && err.message) || String(err));
  },
);
`;

/** Downloads bucket object `objectKey` (prefix included) to `dest`; throws StorageNotFoundError when it is absent. */
export function downloadSync(config: S3Config, key: string, dest: string, timeoutMs = 120_000): void {
  const shared = new SharedArrayBuffer(8 + 2048);
  const state = new Int32Array(shared, 0, 2);
  const tmp = `${dest}.tmp-${process.pid}-sync-${Math.random().toString(36).slice(2, 10)}`;
  const requireFrom = path.join(process.env.TRENCHANT_ROOT ?? process.cwd(), 'package.json');
  const worker = new Worker(WORKER_SOURCE, {
    eval: true,
    workerData: { shared, client: config.client, bucket: config.bucket, key: config.prefix + key, dest, tmp, requireFrom },
    stdout: false,
    stderr: false,
  });
  try {
    const outcome = Atomics.wait(state, 0, 0, timeoutMs);
    const code = Atomics.load(state, 0);
    const message = Buffer.from(new Uint8Array(shared, 8, Atomics.load(state, 1))).toString();
    if (outcome === 'timed-out' && code === 0) throw new Error(`downloading ${key} from object storage took longer than ${Math.round(timeoutMs / 1000)} s`);
    if (code === 3) throw new StorageNotFoundError(key, `s3://${config.bucket}/${config.prefix}`);
    if (code !== 1) throw new Error(`could not download ${key} from object storage: ${message}`);
  } finally {
    void worker.terminate();
  }
}
