/**
 * Copies an installation's files from its data folder to the S3 bucket it is moving to (`npm run storage:migrate`,
 * scripts/migrate-storage.ts), under the same keys the storage interface uses (lib/jobs/paths.ts): layouts/... and
 * analyses/.... Each object is checked after upload by size and checksum — the ETag when it is one of the file's MD5
 * forms (checksums.ts), else by reading the object back and comparing SHA-256 — and carries the file's SHA-256 as
 * metadata. An object already in the bucket with the same size and checksum is skipped, so a run can be repeated
 * after an interruption: what was copied and checked is skipped, what was not is copied (an upload is all or
 * nothing in S3: an interrupted one leaves no object). Local files are never deleted or changed.
 */
import { createHash } from 'node:crypto';
import { createReadStream } from 'node:fs';
import { readdir, stat } from 'node:fs/promises';
import path from 'node:path';
import { GetObjectCommand, HeadObjectCommand } from '@aws-sdk/client-s3';
import { Upload } from '@aws-sdk/lib-storage';
import { fileSums, etagMatches, type FileSums } from './checksums';
import { checkKey } from './keys';
import { TEMP_MARK } from './place-file';
import { PART_BYTES, type S3ObjectStore } from './s3-store';

/** Top folders of the data folder that hold stored objects; everything else there (the database, tmp/) stays. */
export const STORED_ROOTS = ['layouts', 'analyses'] as const;
export const SHA256_METADATA = 'trenchant-sha256';

export type MigrateFile = { key: string; file: string; size: number };
export type MigrateEvent =
  | { type: 'copied'; key: string; bytes: number; verifiedBy: 'etag' | 'read-back'; index: number; total: number }
  | { type: 'skipped'; key: string; bytes: number; index: number; total: number }
  | { type: 'would-copy'; key: string; bytes: number; index: number; total: number }
  | { type: 'failed'; key: string; bytes: number; message: string; index: number; total: number };

export type MigrateSummary = {
  files: number;
  copied: number;
  skipped: number;
  /** Dry run: files that would be copied (missing from the bucket or different there). */
  wouldCopy: number;
  failed: { key: string; message: string }[];
  /** Files not started because the run was stopped (signal). */
  notStarted: number;
  bytesCopied: number;
  bytesSkipped: number;
  /** Entries of the data folder that are not stored objects and were left alone (database, uploads in flight). */
  leftAlone: string[];
  /** Temporary files of writes in progress (".tmp-" in the name), not copied. */
  temporary: number;
};

export type MigrateOptions = {
  concurrency?: number;
  signal?: AbortSignal;
  onEvent?: (event: MigrateEvent) => void;
  /** Only compare: report what would be copied, write nothing. */
  dryRun?: boolean;
};

/** The stored files of a data folder, sorted by key; temporary files are counted, not listed. */
export async function listStoredFiles(dataDir: string): Promise<{ files: MigrateFile[]; leftAlone: string[]; temporary: number }> {
  const root = path.resolve(dataDir);
  const top = await readdir(root, { withFileTypes: true }).catch((err: NodeJS.ErrnoException) => {
    if (err.code === 'ENOENT') throw new Error(`the data folder ${root} does not exist (set TRENCHANT_DATA_DIR or TRENCHANT_DB to the installation's)`);
    throw err;
  });
  const roots = new Set<string>(STORED_ROOTS);
  const leftAlone = top.filter((e) => !roots.has(e.name)).map((e) => (e.isDirectory() ? `${e.name}/` : e.name)).sort();
  const files: MigrateFile[] = [];
  let temporary = 0;
  for (const name of STORED_ROOTS) {
    const entries = await readdir(path.join(root, name), { recursive: true, withFileTypes: true }).catch((err: NodeJS.ErrnoException) => {
      if (err.code === 'ENOENT') return [];
      throw err;
    });
    for (const e of entries) {
      if (!e.isFile()) continue;
      if (e.name.includes(TEMP_MARK)) {
        temporary++;
        continue;
      }
      const file = path.join(e.parentPath, e.name);
      const key = checkKey(path.relative(root, file).split(path.sep).join('/'));
      files.push({ key, file, size: (await stat(file)).size });
    }
  }
  files.sort((a, b) => (a.key < b.key ? -1 : a.key > b.key ? 1 : 0));
  return { files, leftAlone, temporary };
}

/** Copies every stored file of `dataDir` into the bucket of `target`. Never throws for one file's failure. */
export async function migrateToS3(dataDir: string, target: S3ObjectStore, options: MigrateOptions = {}): Promise<MigrateSummary> {
  const { files, leftAlone, temporary } = await listStoredFiles(dataDir);
  const summary: MigrateSummary = { files: files.length, copied: 0, skipped: 0, wouldCopy: 0, failed: [], notStarted: 0, bytesCopied: 0, bytesSkipped: 0, leftAlone, temporary };
  const total = files.length;
  let next = 0;
  let done = 0;
  const worker = async () => {
    for (;;) {
      if (options.signal?.aborted) return;
      const f = files[next++];
      if (!f) return;
      try {
        const outcome = await copyOne(target, f, options.dryRun === true);
        done++;
        if (outcome === 'would-copy') {
          summary.wouldCopy++;
          options.onEvent?.({ type: 'would-copy', key: f.key, bytes: f.size, index: done, total });
        } else if (outcome === 'skipped') {
          summary.skipped++;
          summary.bytesSkipped += f.size;
          options.onEvent?.({ type: 'skipped', key: f.key, bytes: f.size, index: done, total });
        } else {
          summary.copied++;
          summary.bytesCopied += f.size;
          options.onEvent?.({ type: 'copied', key: f.key, bytes: f.size, verifiedBy: outcome, index: done, total });
        }
      } catch (err) {
        done++;
        const message = err instanceof Error ? err.message : String(err);
        summary.failed.push({ key: f.key, message });
        options.onEvent?.({ type: 'failed', key: f.key, bytes: f.size, message, index: done, total });
      }
    }
  };
  const n = Math.max(1, Math.min(16, Math.floor(options.concurrency ?? 4)));
  await Promise.all(Array.from({ length: n }, worker));
  summary.notStarted = total - done;
  summary.failed.sort((a, b) => (a.key < b.key ? -1 : 1));
  return summary;
}

type Head = { size: number; etag?: string; sha256?: string } | null;

async function head(target: S3ObjectStore, key: string): Promise<Head> {
  try {
    const h = await target.client.send(new HeadObjectCommand({ Bucket: target.config.bucket, Key: target.config.prefix + key }));
    return { size: h.ContentLength ?? 0, etag: h.ETag, sha256: h.Metadata?.[SHA256_METADATA] };
  } catch (err) {
    const status = (err as { $metadata?: { httpStatusCode?: number } }).$metadata?.httpStatusCode;
    if (status === 404 || (err as Error).name === 'NotFound' || (err as Error).name === 'NoSuchKey') return null;
    throw err;
  }
}

async function remoteSha256(target: S3ObjectStore, key: string): Promise<string> {
  const res = await target.client.send(new GetObjectCommand({ Bucket: target.config.bucket, Key: target.config.prefix + key }));
  const h = createHash('sha256');
  for await (const chunk of res.Body as AsyncIterable<Uint8Array>) h.update(chunk);
  return h.digest('hex');
}

/** Whether the object holds the file's bytes, and how that was established (null: it does not). */
async function sameBytes(target: S3ObjectStore, key: string, h: Head, sums: FileSums, trustRecorded: boolean): Promise<'etag' | 'read-back' | null> {
  if (!h || h.size !== sums.size) return null;
  if (etagMatches(h.etag, sums)) return 'etag';
  // The SHA-256 a previous run recorded after checking that upload; not trusted for the upload just made.
  if (trustRecorded && h.sha256 === sums.sha256) return 'etag';
  return (await remoteSha256(target, key)) === sums.sha256 ? 'read-back' : null;
}

async function copyOne(target: S3ObjectStore, f: MigrateFile, dryRun: boolean): Promise<'skipped' | 'would-copy' | 'etag' | 'read-back'> {
  const sums = await fileSums(f.file, PART_BYTES);
  if (sums.size !== f.size) throw new Error(`${f.file} changed size while it was being read (${f.size} → ${sums.size} bytes); is the server still writing? Run again when it is stopped`);
  if (await sameBytes(target, f.key, await head(target, f.key), sums, true)) return 'skipped';
  if (dryRun) return 'would-copy';
  const up = new Upload({
    client: target.client,
    params: { Bucket: target.config.bucket, Key: target.config.prefix + f.key, Body: createReadStream(f.file), Metadata: { [SHA256_METADATA]: sums.sha256 } },
    partSize: PART_BYTES,
    queueSize: 2,
    leavePartsOnError: false,
  });
  await up.done();
  const verified = await sameBytes(target, f.key, await head(target, f.key), sums, false);
  if (!verified) throw new Error(`the copy in the bucket does not match the local file (size or checksum differs after upload)`);
  return verified;
}
