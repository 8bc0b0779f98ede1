/**
 * Streaming multipart upload of one layout file, straight to a temporary file in the data folder (never held in
 * memory), with SHA-256 and size counted on the way. Too large → 413 and the partial file removed; interrupted →
 * the temporary file removed. Every stream in the chain has an error handler (a bad body must not become an
 * unhandled rejection).
 */
import busboy from 'busboy';
import { createHash, randomUUID } from 'node:crypto';
import { createWriteStream } from 'node:fs';
import { mkdir, unlink } from 'node:fs/promises';
import path from 'node:path';
import { Readable, Transform, type TransformCallback } from 'node:stream';
import { pipeline } from 'node:stream/promises';
import type { ReadableStream as NodeWebReadableStream } from 'node:stream/web';
import { ApiError } from '@/lib/http/errors';
import { uploadTmpDir } from '@/lib/jobs/paths';

export const DEFAULT_MAX_UPLOAD_BYTES = 2 * 1024 ** 3;

/** Upload size limit in bytes: TRENCHANT_MAX_UPLOAD_BYTES, default 2 GiB. */
export function maxUploadBytes(): number {
  const v = Number(process.env.TRENCHANT_MAX_UPLOAD_BYTES);
  return Number.isFinite(v) && v > 0 ? Math.floor(v) : DEFAULT_MAX_UPLOAD_BYTES;
}

export function formatBytes(n: number): string {
  if (n >= 1024 ** 3) return `${(n / 1024 ** 3).toFixed(n % 1024 ** 3 === 0 ? 0 : 2)} GiB`;
  if (n >= 1024 ** 2) return `${(n / 1024 ** 2).toFixed(n % 1024 ** 2 === 0 ? 0 : 1)} MiB`;
  if (n >= 1024) return `${(n / 1024).toFixed(n % 1024 === 0 ? 0 : 1)} KiB`;
  return `${n} bytes`;
}

export type ReceivedFile = {
  /** Absolute path of the temporary file (caller moves or deletes it). */
  tmpPath: string;
  originalName: string;
  sizeBytes: number;
  sha256: string;
  /** First bytes of the file (up to 64), for format sniffing. */
  head: Uint8Array;
};

export type ReceivedUpload = { file: ReceivedFile; fields: Record<string, string> };

/** Counts bytes, hashes them and keeps the first 64 bytes. */
class Digest extends Transform {
  readonly hash = createHash('sha256');
  size = 0;
  head = new Uint8Array(0);
  override _transform(chunk: Buffer, _enc: BufferEncoding, done: TransformCallback): void {
    this.hash.update(chunk);
    this.size += chunk.length;
    if (this.head.length < 64) {
      const joined = new Uint8Array(Math.min(64, this.head.length + chunk.length));
      joined.set(this.head);
      joined.set(chunk.subarray(0, joined.length - this.head.length), this.head.length);
      this.head = joined;
    }
    done(null, chunk);
  }
}

/**
 * Receives a multipart/form-data request with exactly one file field named `file` (other fields are short text).
 * Throws ApiError: 415 not multipart, 413 over the limit, 400 no file / interrupted / malformed body.
 */
export async function receiveUpload(request: Request, limitBytes = maxUploadBytes()): Promise<ReceivedUpload> {
  const contentType = request.headers.get('content-type') ?? '';
  if (!/^multipart\/form-data/i.test(contentType)) {
    throw new ApiError('unsupported_media_type', 'Send the layout as multipart/form-data with the file in a field named "file".');
  }
  const declared = Number(request.headers.get('content-length'));
  const tooLarge = () => new ApiError('payload_too_large', `The file is larger than the upload limit of ${formatBytes(limitBytes)} (TRENCHANT_MAX_UPLOAD_BYTES).`);
  // The multipart envelope adds a few hundred bytes; anything far beyond the limit is refused before reading.
  if (Number.isFinite(declared) && declared > limitBytes + 64 * 1024) throw tooLarge();
  if (!request.body) throw new ApiError('bad_request', 'The request has no body; attach the layout file in a field named "file".');

  await mkdir(uploadTmpDir(), { recursive: true });
  const fields: Record<string, string> = {};
  const got: { file: ReceivedFile | null } = { file: null };
  let tmpPath: string | null = null;
  let overLimit = false;
  let extraFile = false;
  const writes: Promise<void>[] = [];

  let bb: busboy.Busboy;
  try {
    bb = busboy({ headers: { 'content-type': contentType }, limits: { files: 1, fileSize: limitBytes, fields: 20, fieldSize: 64 * 1024, parts: 40 } });
  } catch (err) {
    throw new ApiError('bad_request', `The multipart body cannot be read: ${err instanceof Error ? err.message : String(err)}.`);
  }
  bb.on('field', (name, value) => {
    fields[name] = value;
  });
  bb.on('filesLimit', () => {
    extraFile = true;
  });
  bb.on('file', (name, stream, info) => {
    if (name !== 'file' || tmpPath !== null) {
      extraFile = extraFile || name === 'file';
      stream.resume(); // drain and ignore
      return;
    }
    const target = path.join(uploadTmpDir(), `upload-${randomUUID()}`);
    tmpPath = target;
    const digest = new Digest();
    stream.on('limit', () => {
      overLimit = true;
    });
    writes.push(
      pipeline(stream, digest, createWriteStream(target)).then(() => {
        got.file = { tmpPath: target, originalName: info.filename ?? 'layout', sizeBytes: digest.size, sha256: digest.hash.digest('hex'), head: digest.head };
      }),
    );
  });

  try {
    await pipeline(Readable.fromWeb(request.body as unknown as NodeWebReadableStream), bb);
    await Promise.all(writes);
  } catch (err) {
    await removeQuietly(tmpPath);
    if (overLimit) throw tooLarge();
    const msg = err instanceof Error ? err.message : String(err);
    throw new ApiError('bad_request', `The upload was interrupted or its multipart body is malformed (${msg}); nothing was stored.`);
  }
  if (overLimit) {
    await removeQuietly(tmpPath);
    throw tooLarge();
  }
  if (extraFile) {
    await removeQuietly(tmpPath);
    throw new ApiError('bad_request', 'Send exactly one file per upload, in the field named "file".');
  }
  const file = got.file;
  if (!file) {
    await removeQuietly(tmpPath);
    throw new ApiError('bad_request', 'No file in the upload: attach the layout in a multipart field named "file".', { fieldErrors: { file: ['Choose a layout file.'] } });
  }
  return { file, fields };
}

export async function removeQuietly(p: string | null): Promise<void> {
  if (p) await unlink(p).catch(() => undefined);
}
