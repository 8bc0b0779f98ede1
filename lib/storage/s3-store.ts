/**
 * Objects in an S3-compatible bucket through the AWS SDK v3. Uploads of files and streams go through
 * @aws-sdk/lib-storage's Upload (multipart above 8 MiB, so a layout of gigabytes is never held in memory); reads
 * are streamed; a range read is an HTTP Range request.
 */
import { createReadStream } from 'node:fs';
import { unlink } from 'node:fs/promises';
import { Readable } from 'node:stream';
import { DeleteObjectCommand, DeleteObjectsCommand, GetObjectCommand, HeadBucketCommand, HeadObjectCommand, ListObjectsV2Command, PutObjectCommand, S3Client, S3ServiceException } from '@aws-sdk/client-s3';
import { Upload } from '@aws-sdk/lib-storage';
import { checkKey, checkPrefix } from './keys';
import { streamIntoPlace } from './place-file';
import { describeS3, type S3Config } from './s3-config';
import { StorageNotFoundError, type ByteRange, type ObjectStat, type ObjectStore } from './types';

/** Multipart part size of uploads (also what the migration assumes when it checks a multipart ETag). */
export const PART_BYTES = 8 * 1024 * 1024;

function statusOf(err: unknown): number | undefined {
  return err instanceof S3ServiceException ? err.$metadata.httpStatusCode : (err as { $metadata?: { httpStatusCode?: number } } | null)?.$metadata?.httpStatusCode;
}
const isMissing = (err: unknown) => statusOf(err) === 404 || (err as Error | null)?.name === 'NoSuchKey' || (err as Error | null)?.name === 'NotFound';

export class S3ObjectStore implements ObjectStore {
  readonly kind = 's3' as const;
  readonly client: S3Client;
  readonly where: string;
  constructor(readonly config: S3Config) {
    this.client = new S3Client(config.client);
    this.where = describeS3(config);
  }

  private name(key: string): string {
    return this.config.prefix + checkKey(key);
  }

  /** Throws unless the bucket exists and these credentials may reach it. */
  async checkBucket(): Promise<void> {
    try {
      await this.client.send(new HeadBucketCommand({ Bucket: this.config.bucket }));
    } catch (err) {
      const status = statusOf(err);
      if (status === 404) throw new Error(`bucket ${this.config.bucket} does not exist`);
      if (status === 403) throw new Error(`access to bucket ${this.config.bucket} is denied with these credentials`);
      throw err;
    }
  }

  localPath(): null {
    return null;
  }

  private async upload(key: string, body: Readable | Uint8Array): Promise<void> {
    const up = new Upload({ client: this.client, params: { Bucket: this.config.bucket, Key: this.name(key), Body: body }, partSize: PART_BYTES, queueSize: 2, leavePartsOnError: false });
    await up.done();
  }

  async putFile(key: string, srcPath: string, options: { move?: boolean } = {}): Promise<void> {
    await this.upload(key, createReadStream(srcPath));
    if (options.move) await unlink(srcPath);
  }

  async putBytes(key: string, bytes: Uint8Array): Promise<void> {
    await this.client.send(new PutObjectCommand({ Bucket: this.config.bucket, Key: this.name(key), Body: bytes, ContentLength: bytes.byteLength }));
  }

  putStream(key: string, body: Readable): Promise<void> {
    return this.upload(key, body);
  }

  async stat(key: string): Promise<ObjectStat | null> {
    try {
      const head = await this.client.send(new HeadObjectCommand({ Bucket: this.config.bucket, Key: this.name(key) }));
      return { size: head.ContentLength ?? 0, modifiedAt: head.LastModified ?? null };
    } catch (err) {
      if (isMissing(err)) return null;
      throw err;
    }
  }

  async getStream(key: string, range?: ByteRange): Promise<Readable> {
    const start = Math.max(0, range?.start ?? 0);
    const end = range?.end;
    if (end !== undefined && end <= start) {
      // Empty range: still an error when the object is missing, as on disk.
      if (!(await this.stat(key))) throw new StorageNotFoundError(key, this.where);
      return Readable.from([]);
    }
    const header = range ? `bytes=${start}-${end !== undefined ? end - 1 : ''}` : undefined;
    try {
      const res = await this.client.send(new GetObjectCommand({ Bucket: this.config.bucket, Key: this.name(key), ...(header ? { Range: header } : {}) }));
      if (!res.Body) return Readable.from([]);
      const body = res.Body as Readable;
      if (!range) return body;
      // A server may send more than asked: the whole object with 200 (RFC 9110 §14.2 lets it ignore Range), or,
      // like some fakes for "bytes=0-0", a wider range that Content-Range names. Cut the asked range out of it.
      const sent = /^bytes (\d+)-(\d+)\//.exec(res.ContentRange ?? '');
      const sentStart = sent ? Number(sent[1]) : 0;
      const sentEnd = sent ? Number(sent[2]) + 1 : Number.POSITIVE_INFINITY;
      if (sentStart === start && (end === undefined || sentEnd === end || (sent && sentEnd < end))) return body;
      return Readable.from(sliceBytes(body, start - sentStart, end === undefined ? undefined : end - sentStart));
    } catch (err) {
      if (isMissing(err)) throw new StorageNotFoundError(key, this.where);
      // A range starting at or past the end: the same empty answer the disk gives.
      if (statusOf(err) === 416) {
        if (!(await this.stat(key))) throw new StorageNotFoundError(key, this.where);
        return Readable.from([]);
      }
      throw err;
    }
  }

  async getBytes(key: string, range?: ByteRange): Promise<Uint8Array> {
    const chunks: Buffer[] = [];
    for await (const chunk of await this.getStream(key, range)) chunks.push(Buffer.from(chunk as Uint8Array));
    return Buffer.concat(chunks);
  }

  async downloadTo(key: string, destPath: string): Promise<void> {
    const body = await this.getStream(key);
    await streamIntoPlace(destPath, body);
  }

  async delete(key: string): Promise<void> {
    await this.client.send(new DeleteObjectCommand({ Bucket: this.config.bucket, Key: this.name(key) }));
  }

  async deletePrefix(prefix: string): Promise<number> {
    const full = this.config.prefix + checkPrefix(prefix);
    let removed = 0;
    let token: string | undefined;
    do {
      const page = await this.client.send(new ListObjectsV2Command({ Bucket: this.config.bucket, Prefix: full, ...(token ? { ContinuationToken: token } : {}) }));
      const keys = (page.Contents ?? []).map((o) => o.Key).filter((k): k is string => Boolean(k));
      if (keys.length > 0) {
        const res = await this.client.send(new DeleteObjectsCommand({ Bucket: this.config.bucket, Delete: { Objects: keys.map((Key) => ({ Key })), Quiet: true } }));
        const failed = res.Errors ?? [];
        if (failed.length > 0) throw new Error(`could not delete ${failed.length} object(s) under ${full}: ${failed[0]?.Key} ${failed[0]?.Message ?? failed[0]?.Code ?? ''}`);
        removed += keys.length;
      }
      token = page.IsTruncated ? page.NextContinuationToken : undefined;
    } while (token);
    return removed;
  }
}

/** Bytes [start, end) of the stream; leaving the loop early destroys the source (no socket left open). */
async function* sliceBytes(source: AsyncIterable<Uint8Array>, start: number, end: number | undefined): AsyncGenerator<Buffer> {
  let at = 0;
  for await (const chunk of source) {
    const from = Math.max(0, start - at);
    const to = end === undefined ? chunk.length : Math.min(chunk.length, end - at);
    at += chunk.length;
    if (to > from) yield Buffer.from(chunk.buffer, chunk.byteOffset + from, to - from);
    if (end !== undefined && at >= end) break;
  }
}

/**
 * The store as an S3 store, or null. By shape rather than instanceof: Next may load this module in several bundles,
 * and the process-wide store (lib/storage/index.ts) may have been made by another bundle's copy of the class.
 */
export function asS3Store(store: ObjectStore): S3ObjectStore | null {
  return store.kind === 's3' && 'config' in store && 'checkBucket' in store ? (store as S3ObjectStore) : null;
}
