/**
 * Locating (and building when stale) the compiled worker files, lib/jobs/worker-file.ts: the override variables are
 * taken as given; one build serves every caller of a process; a failed build is not remembered (the next call tries
 * again); a source newer than the build makes it stale until workerFile() builds again. Runs the real esbuild build
 * (scripts/build-worker.mjs) of this checkout.
 */
import { existsSync, mkdtempSync, rmSync, statSync, utimesSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, afterEach, describe, expect, it } from 'vitest';
import { forgetWorkerFile, uploadWorkerFile, workerFile, workerStaleReason } from '@/lib/jobs/worker-file';

const saved = { ...process.env };
const emptyRoot = mkdtempSync(path.join(tmpdir(), 'trenchant-worker-file-test-'));

afterEach(() => {
  process.env = { ...saved };
});
afterAll(() => rmSync(emptyRoot, { recursive: true, force: true }));

describe('compiled worker files', () => {
  it('takes the override variables as given, resolved', async () => {
    process.env.TRENCHANT_WORKER_FILE = 'some/where/worker.mjs';
    process.env.TRENCHANT_UPLOAD_WORKER_FILE = '/abs/upload.mjs';
    expect(await workerFile()).toBe(path.resolve('some/where/worker.mjs'));
    expect(await uploadWorkerFile()).toBe('/abs/upload.mjs');
  });

  it('a failed build is tried again on the next call', async () => {
    delete process.env.TRENCHANT_UPLOAD_WORKER_FILE;
    process.env.TRENCHANT_ROOT = emptyRoot; // no build script there: the build fails
    await expect(uploadWorkerFile()).rejects.toThrow(/could not compile/);
    process.env.TRENCHANT_ROOT = process.cwd();
    const file = await uploadWorkerFile();
    expect(file).toBe(path.join(process.cwd(), 'node_modules', '.cache', 'trenchant', 'upload-worker.mjs'));
    expect(existsSync(file)).toBe(true);
  }, 180_000);

  it('one build for all callers; a changed source makes it stale until the next build', async () => {
    delete process.env.TRENCHANT_WORKER_FILE;
    process.env.TRENCHANT_ROOT = process.cwd();
    const [a, b] = [workerFile(), workerFile()];
    expect(a).toBe(b);
    const file = await a;
    expect(existsSync(file)).toBe(true);
    expect(workerStaleReason()).toBeNull();

    const source = path.join(process.cwd(), 'lib', 'storage', 'place-file.ts'); // an input of the analysis worker
    const later = new Date(statSync(file).mtimeMs + 1); // newer than the build, older than the next one
    utimesSync(source, later, later);
    expect(workerStaleReason()).toBe('lib/storage/place-file.ts changed');
    expect(await workerFile()).toBe(file); // remembered for the process: no second look
    forgetWorkerFile();
    expect(await workerFile()).toBe(file);
    expect(workerStaleReason()).toBeNull();
  }, 300_000);
});
