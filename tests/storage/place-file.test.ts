/**
 * Writing a file into place (lib/storage/place-file.ts):
 *   - a failure in the middle (the writer, a stream that errors, a missing source, the rename itself, the
 *     before-place hook) leaves no temporary file and the existing target byte for byte as it was;
 *   - a move is one rename on one file system (same inode), and a copy then removal across file systems (/dev/shm is
 *     tmpfs here, the temp folder is not; skipped where they are one file system);
 *   - concurrent writers of one target end with one writer's complete file, and a reader polling meanwhile only ever
 *     sees a complete version.
 * POSIX rename(2) replaces the target atomically (a reader opens the old file or the new one, never a mix): that is
 * the property relied on, stated in the POSIX rename() specification.
 */
import { existsSync, mkdirSync, mkdtempSync, readdirSync, readFileSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { readFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { Readable } from 'node:stream';
import { afterAll, describe, expect, it } from 'vitest';
import { bytesIntoPlace, copyIntoPlace, moveIntoPlace, streamIntoPlace, TEMP_MARK, tempNameBeside, writeIntoPlace } from '@/lib/storage/place-file';
import { pattern, sha } from './test-bytes';

const scratch = mkdtempSync(path.join(tmpdir(), 'trenchant-place-file-test-'));
const shm = '/dev/shm';
const otherFs = existsSync(shm) && statSync(shm).dev !== statSync(scratch).dev ? mkdtempSync(path.join(shm, 'trenchant-place-file-test-')) : null;

afterAll(() => {
  rmSync(scratch, { recursive: true, force: true });
  if (otherFs) rmSync(otherFs, { recursive: true, force: true });
});

let n = 0;
const freshDir = (base = scratch) => {
  const dir = path.join(base, `case-${++n}`);
  mkdirSync(dir, { recursive: true });
  return dir;
};
const temporaries = (dir: string) => readdirSync(dir).filter((f) => f.includes(TEMP_MARK));

/** A target that already holds `old`, to check a failed write leaves it alone. */
function existingTarget(dir: string) {
  const target = path.join(dir, 'result.bin');
  const old = pattern(10_000, 7);
  writeFileSync(target, old);
  return { target, old };
}

/** A stream of `chunks` that errors after sending them. */
function failingStream(chunks: Buffer[]): Readable {
  return new Readable({
    read() {
      const next = chunks.shift();
      if (next) this.push(next);
      else this.destroy(new Error('connection reset mid-body'));
    },
  });
}

describe('writing into place', () => {
  it('writes bytes, parts in order, and makes the folder', async () => {
    const target = path.join(freshDir(), 'deep', 'er', 'parts.bin');
    const a = pattern(3000, 1);
    const b = pattern(5000, 2);
    await bytesIntoPlace(target, [a, b]);
    expect(sha(readFileSync(target))).toBe(sha(Buffer.concat([a, b])));
    expect(temporaries(path.dirname(target))).toEqual([]);
  });

  it('names temporaries beside the target, marked, never twice the same', () => {
    const target = path.join(scratch, 'x', 'map.trgrid');
    const names = new Set(Array.from({ length: 200 }, () => tempNameBeside(target)));
    expect(names.size).toBe(200);
    for (const name of names) {
      expect(path.dirname(name)).toBe(path.dirname(target));
      expect(path.basename(name).startsWith(`map.trgrid${TEMP_MARK}${process.pid}-`)).toBe(true);
    }
    expect(path.basename(tempNameBeside(target, 'dl'))).toMatch(new RegExp(`^map\\.trgrid\\.tmp-${process.pid}-dl-[0-9a-f]{8}$`));
  });

  it('a writer failing half way leaves no temporary and the old target', async () => {
    const dir = freshDir();
    const { target, old } = existingTarget(dir);
    let tmpSeen = '';
    const failure = writeIntoPlace(target, async (tmp) => {
      tmpSeen = tmp;
      writeFileSync(tmp, pattern(4000, 9)); // half written
      throw new Error('disk full');
    });
    await expect(failure).rejects.toThrow('disk full');
    expect(tmpSeen).toContain(TEMP_MARK);
    expect(existsSync(tmpSeen)).toBe(false);
    expect(temporaries(dir)).toEqual([]);
    expect(sha(readFileSync(target))).toBe(sha(old));
  });

  it('a stream that errors mid-body leaves no temporary and the old target', async () => {
    const dir = freshDir();
    const { target, old } = existingTarget(dir);
    await expect(streamIntoPlace(target, failingStream([pattern(64 * 1024, 3), pattern(64 * 1024, 4)]))).rejects.toThrow('connection reset');
    expect(temporaries(dir)).toEqual([]);
    expect(sha(readFileSync(target))).toBe(sha(old));
  });

  it('a missing source leaves no temporary and the old target', async () => {
    const dir = freshDir();
    const { target, old } = existingTarget(dir);
    await expect(copyIntoPlace(path.join(dir, 'absent'), target)).rejects.toMatchObject({ code: 'ENOENT' });
    await expect(moveIntoPlace(path.join(dir, 'absent'), target)).rejects.toMatchObject({ code: 'ENOENT' });
    expect(temporaries(dir)).toEqual([]);
    expect(sha(readFileSync(target))).toBe(sha(old));
  });

  it('a rename that fails (the target is a folder with files) removes the temporary', async () => {
    const dir = freshDir();
    const target = path.join(dir, 'taken');
    mkdirSync(target);
    writeFileSync(path.join(target, 'inside'), 'keep');
    await expect(bytesIntoPlace(target, pattern(100))).rejects.toMatchObject({ code: expect.stringMatching(/^(EISDIR|ENOTEMPTY|EEXIST)$/) });
    expect(temporaries(dir)).toEqual([]);
    expect(readFileSync(path.join(target, 'inside'), 'utf8')).toBe('keep');
  });

  it('the before-place hook sees the whole temporary; when it throws, nothing is placed', async () => {
    const dir = freshDir();
    const { target, old } = existingTarget(dir);
    const src = path.join(dir, 'src.bin');
    const bytes = pattern(20_000, 5);
    writeFileSync(src, bytes);
    const seen: string[] = [];
    const failing = copyIntoPlace(src, target, (file) => {
      seen.push(sha(readFileSync(file)));
      expect(file).toContain(TEMP_MARK);
      throw new Error('hook refused');
    });
    await expect(failing).rejects.toThrow('hook refused');
    expect(seen).toEqual([sha(bytes)]);
    expect(temporaries(dir)).toEqual([]);
    expect(sha(readFileSync(target))).toBe(sha(old));
    expect(sha(readFileSync(src))).toBe(sha(bytes)); // a copy leaves its source
  });

  it('a move on one file system is a rename: same inode, the source gone, the hook on the source', async () => {
    const dir = freshDir();
    const { target } = existingTarget(dir);
    const src = path.join(dir, 'spill.trfeat');
    const bytes = pattern(50_000, 6);
    writeFileSync(src, bytes);
    const ino = statSync(src).ino;
    const hooked: string[] = [];
    await moveIntoPlace(src, target, (f) => void hooked.push(f));
    expect(hooked).toEqual([src]);
    expect(existsSync(src)).toBe(false);
    expect(statSync(target).ino).toBe(ino);
    expect(sha(readFileSync(target))).toBe(sha(bytes));
    expect(temporaries(dir)).toEqual([]);
  });
});

describe.skipIf(!otherFs)('moving across file systems (/dev/shm to the temp folder)', () => {
  it('copies into place under a temporary name and removes the source', async () => {
    const dir = freshDir();
    const { target } = existingTarget(dir);
    const src = path.join(freshDir(otherFs!), 'spill.trfeat');
    const bytes = pattern(300_000, 8);
    writeFileSync(src, bytes);
    const hooked: string[] = [];
    await moveIntoPlace(src, target, (f) => void hooked.push(f));
    // The hook ran on the source before the rename that failed with EXDEV, then on the temporary copy beside the target.
    expect(hooked).toHaveLength(2);
    expect(hooked[0]).toBe(src);
    expect(path.dirname(hooked[1]!)).toBe(dir);
    expect(hooked[1]).toContain(TEMP_MARK);
    expect(existsSync(src)).toBe(false);
    expect(sha(readFileSync(target))).toBe(sha(bytes));
    expect(temporaries(dir)).toEqual([]);
  });

  it('a failure after the copy leaves the source, the old target and no temporary', async () => {
    const dir = freshDir();
    const { target, old } = existingTarget(dir);
    const src = path.join(freshDir(otherFs!), 'spill.trfeat');
    writeFileSync(src, pattern(30_000, 10));
    let calls = 0;
    const failing = moveIntoPlace(src, target, () => {
      if (++calls === 2) throw new Error('could not settle times');
    });
    await expect(failing).rejects.toThrow('could not settle times');
    expect(existsSync(src)).toBe(true);
    expect(sha(readFileSync(target))).toBe(sha(old));
    expect(temporaries(dir)).toEqual([]);
  });
});

describe('concurrent writers of one target', () => {
  it('end with one complete file; a reader meanwhile sees only complete versions', async () => {
    const dir = freshDir();
    const { target, old } = existingTarget(dir);
    const size = 2 * 1024 * 1024 + 17;
    const versions = Array.from({ length: 8 }, (_, i) => pattern(size, 100 + i));
    const allowed = new Set([sha(old), ...versions.map(sha)]);
    const srcs = versions.map((v, i) => {
      const file = path.join(dir, `src-${i}`);
      writeFileSync(file, v);
      return file;
    });
    let writing = true;
    let reads = 0;
    const reader = (async () => {
      while (writing) {
        expect(allowed.has(sha(await readFile(target)))).toBe(true);
        reads++;
      }
    })();
    const chunked = (b: Buffer) => Readable.from(Array.from({ length: Math.ceil(b.length / 65_536) }, (_, k) => b.subarray(k * 65_536, (k + 1) * 65_536)));
    // Three ways in at once: bytes, a stream in 64 KiB chunks, a copy.
    await Promise.all(
      versions.map((v, i) => (i % 3 === 0 ? bytesIntoPlace(target, v) : i % 3 === 1 ? streamIntoPlace(target, chunked(v)) : copyIntoPlace(srcs[i]!, target))),
    );
    writing = false;
    await reader;
    const final = sha(readFileSync(target));
    expect(versions.map(sha)).toContain(final);
    expect(statSync(target).size).toBe(size);
    expect(temporaries(dir)).toEqual([]);
    expect(reads).toBeGreaterThan(0);
  });
});
