/**
 * Checksums of a local file in one streaming pass, for checking a copy in the bucket: SHA-256 (what the migration
 * records on each object it uploads), and the MD5 forms S3 reports as ETag for objects stored without encryption
 * by KMS — the MD5 of the whole object for a single PUT (and, on some S3-compatible servers, for multipart uploads
 * too), or for a multipart upload the MD5 of the parts' binary MD5s followed by "-<part count>". The part form is
 * documented by AWS ("Checking object integrity", S3 user guide) only implicitly; it is common practice, no
 * source beyond that. An ETag of any other form proves nothing, and the caller compares bytes instead.
 */
import { createHash } from 'node:crypto';
import { createReadStream } from 'node:fs';

export type FileSums = { size: number; sha256: string; md5: string; multipartEtag: string };

export async function fileSums(file: string, partBytes: number): Promise<FileSums> {
  const sha = createHash('sha256');
  const whole = createHash('md5');
  const partDigests: Buffer[] = [];
  let part = createHash('md5');
  let inPart = 0;
  let size = 0;
  for await (const chunk of createReadStream(file, { highWaterMark: 1024 * 1024 }) as AsyncIterable<Buffer>) {
    sha.update(chunk);
    whole.update(chunk);
    size += chunk.length;
    let at = 0;
    while (at < chunk.length) {
      const take = Math.min(chunk.length - at, partBytes - inPart);
      part.update(chunk.subarray(at, at + take));
      inPart += take;
      at += take;
      if (inPart === partBytes) {
        partDigests.push(part.digest());
        part = createHash('md5');
        inPart = 0;
      }
    }
  }
  if (inPart > 0 || partDigests.length === 0) partDigests.push(part.digest());
  const multipartEtag = `${createHash('md5').update(Buffer.concat(partDigests)).digest('hex')}-${partDigests.length}`;
  return { size, sha256: sha.digest('hex'), md5: whole.digest('hex'), multipartEtag };
}

/**
 * True when the ETag is one of the file's MD5 forms. False proves nothing by itself: objects encrypted with KMS,
 * or uploaded with another part size, have ETags that are not these digests, so the caller compares bytes then.
 */
export function etagMatches(etag: string | undefined, sums: FileSums): boolean {
  const e = (etag ?? '').replaceAll('"', '').toLowerCase();
  return e !== '' && (e === sums.md5 || e === sums.multipartEtag);
}
