/**
 * A fake S3 server (s3rver via scripts/fake-s3.mjs) in a child process for tests, with a client to look inside
 * the bucket. A child process rather than this one: the synchronous read path (lib/storage/sync-fetch.ts) blocks
 * its thread while waiting, so a server on that same thread could never answer.
 */
import { spawn } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { createInterface } from 'node:readline';
import { ListObjectsV2Command, S3Client } from '@aws-sdk/client-s3';
import { s3ConfigFromEnv } from '@/lib/storage/s3-config';
import { PROJECT_ROOT } from './server';

export type TestS3 = {
  endpoint: string;
  bucket: string;
  /** TRENCHANT_S3_* for a server or store pointed at it. */
  env: Record<string, string>;
  /** Every key in the bucket (under `prefix`), sorted. */
  keys: (prefix?: string) => Promise<string[]>;
  stop: () => Promise<void>;
};

export async function startTestS3(): Promise<TestS3> {
  const dir = mkdtempSync(path.join(tmpdir(), 'trenchant-fake-s3-'));
  const child = spawn(process.execPath, [path.join(PROJECT_ROOT, 'scripts', 'fake-s3.mjs'), dir, '0'], { cwd: PROJECT_ROOT, stdio: ['ignore', 'pipe', 'pipe'] });
  let stderr = '';
  child.stderr?.on('data', (d: Buffer) => (stderr += d.toString()));
  const first = await new Promise<string>((resolve, reject) => {
    const lines = createInterface({ input: child.stdout! });
    const timer = setTimeout(() => reject(new Error(`fake S3 server did not start: ${stderr}`)), 20_000);
    lines.once('line', (line) => {
      clearTimeout(timer);
      resolve(line);
    });
    child.once('exit', (code) => reject(new Error(`fake S3 server exited with ${code}: ${stderr}`)));
  });
  const info = JSON.parse(first) as { endpoint: string; bucket: string; env: Record<string, string> };
  const config = s3ConfigFromEnv(info.env)!;
  const client = new S3Client(config.client);
  return {
    ...info,
    keys: async (prefix = '') => {
      const out: string[] = [];
      let token: string | undefined;
      do {
        const page = await client.send(new ListObjectsV2Command({ Bucket: info.bucket, Prefix: prefix, ...(token ? { ContinuationToken: token } : {}) }));
        for (const o of page.Contents ?? []) if (o.Key) out.push(o.Key);
        token = page.IsTruncated ? page.NextContinuationToken : undefined;
      } while (token);
      return out.sort();
    },
    stop: async () => {
      client.destroy();
      if (child.exitCode === null) {
        await new Promise<void>((resolve) => {
          child.once('exit', () => resolve());
          child.kill('SIGTERM');
        });
      }
      rmSync(dir, { recursive: true, force: true });
    },
  };
}
