/**
 * Locating (and building when stale) the compiled worker files, lib/jobs/worker-file.ts, in a project folder of its
 * own (TRENCHANT_ROOT) whose build script is a stand-in that writes the output files and their input lists and
 * counts its runs — so the checkout's own sources and worker files are never touched:
 *   - the override variables are taken as given;
 *   - one build serves every caller of a process;
 *   - a failed build is not remembered (the next call tries again);
 *   - an input newer than the build makes it stale; workerFile() keeps its answer until forgetWorkerFile().
 */
import { existsSync, mkdirSync, mkdtempSync, readFileSync, rmSync, statSync, utimesSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, afterEach, describe, expect, it } from 'vitest';
import { forgetWorkerFile, uploadWorkerFile, workerFile, workerStaleReason } from '@/lib/jobs/worker-file';

const saved = { ...process.env };
const root = mkdtempSync(path.join(tmpdir(), 'trenchant-worker-file-test-'));
const outDir = path.join(root, 'node_modules', '.cache', 'trenchant');
const builds = path.join(root, 'builds.log');
const failFlag = path.join(root, 'fail-next-build');
const input = path.join(root, 'lib', 'pipeline', 'worker.ts'); // the entry (its presence means "sources here")

mkdirSync(path.dirname(input), { recursive: true });
writeFileSync(input, '// stand-in source\n');
mkdirSync(path.join(root, 'scripts'));
writeFileSync(
  path.join(root, 'scripts', 'build-worker.mjs'),
  `import { appendFileSync, existsSync, mkdirSync, writeFileSync } from 'node:fs';
if (existsSync(${JSON.stringify(failFlag)})) { console.error('stand-in build failure'); process.exit(1); }
appendFileSync(${JSON.stringify(builds)}, 'built\\n');
mkdirSync(${JSON.stringify(outDir)}, { recursive: true });
for (const name of ['analysis-worker', 'upload-worker', 'features-thread', 'tile-thread', 'analysis-helper-thread']) {
  writeFileSync(${JSON.stringify(outDir)} + '/' + name + '.mjs', 'export default () => null;\\n');
  writeFileSync(${JSON.stringify(outDir)} + '/' + name + '.mjs.inputs.json', JSON.stringify(['lib/pipeline/worker.ts']));
}
`,
);
const buildCount = () => (existsSync(builds) ? readFileSync(builds, 'utf8').split('\n').filter(Boolean).length : 0);

afterEach(() => {
  process.env = { ...saved };
});
afterAll(() => rmSync(root, { recursive: true, force: true }));

describe('compiled worker files', () => {
  it('takes the override variables as given, resolved', async () => {
    process.env.TRENCHANT_WORKER_FILE = 'some/where/worker.mjs';
    process.env.TRENCHANT_UPLOAD_WORKER_FILE = '/abs/upload.mjs';
    expect(await workerFile()).toBe(path.resolve('some/where/worker.mjs'));
    expect(await uploadWorkerFile()).toBe('/abs/upload.mjs');
  });

  it('a failed build is tried again on the next call', async () => {
    delete process.env.TRENCHANT_UPLOAD_WORKER_FILE;
    process.env.TRENCHANT_ROOT = root;
    writeFileSync(failFlag, '');
    await expect(uploadWorkerFile()).rejects.toThrow(/could not compile.*stand-in build failure/);
    rmSync(failFlag);
    expect(await uploadWorkerFile()).toBe(path.join(outDir, 'upload-worker.mjs'));
    expect(buildCount()).toBe(1);
  }, 60_000);

  it('one build for all callers; a changed input makes it stale until the next build', async () => {
    delete process.env.TRENCHANT_WORKER_FILE;
    process.env.TRENCHANT_ROOT = root;
    rmSync(outDir, { recursive: true, force: true });
    expect(workerStaleReason(root)).toBe('not built yet');
    const before = buildCount();
    const [a, b] = [workerFile(), workerFile()];
    expect(a).toBe(b);
    const file = await a;
    expect(file).toBe(path.join(outDir, 'analysis-worker.mjs'));
    expect(buildCount()).toBe(before + 1);
    expect(workerStaleReason(root)).toBeNull();

    const later = new Date(statSync(file).mtimeMs + 60_000);
    utimesSync(input, later, later);
    expect(workerStaleReason(root)).toBe('lib/pipeline/worker.ts changed');
    expect(await workerFile()).toBe(file); // remembered for the process: no second look
    expect(buildCount()).toBe(before + 1);
    forgetWorkerFile();
    expect(await workerFile()).toBe(file);
    expect(buildCount()).toBe(before + 2);
  }, 60_000);
});
