// Compiles the worker-thread entries into ES modules that worker threads can load under `next start`, where
// Next's bundle has no separate worker file:
//   lib/pipeline/worker.ts       → analysis-worker.mjs (the analysis job pool)
//   lib/uploads/check-worker.ts  → upload-worker.mjs   (the upload check pool)
//   lib/geometry/features-thread.ts → features-thread.mjs (the second thread that measures openings; the analysis
//                                   worker finds it beside itself)
//   lib/pipeline/analysis-helper-thread.ts → analysis-helper-thread.mjs (the analysis's second thread for the
//                                   union, features and other split stages; found beside the analysis worker)
//   lib/viewer/index-worker.ts   → viewer-index-worker.mjs (the canvas viewer's polygon indexes, off the main thread)
//   lib/pipeline/tiled/tile-thread.ts → tile-thread.mjs (tile jobs of a tiled analysis on worker threads; the
//                                   analysis worker finds it beside itself, as it finds features-thread.mjs)
// Run by `npm run build`, and by the server itself (lib/jobs/worker-file.ts) when a file is missing or older than
// its sources, so `next build` alone, the test helper and `next dev` work too. Kept out of .next, which
// `next build` empties. Writes to temporary names and renames, so concurrent builders and running pools never see
// half a file. Output in node_modules/.cache/trenchant/, each with <file>.inputs.json (its sources, for staleness).
import { createRequire } from 'node:module';
import { mkdirSync, renameSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');
const OUT_DIR = path.join(root, 'node_modules', '.cache', 'trenchant');
const ENTRIES = [
  { entry: 'lib/pipeline/worker.ts', out: 'analysis-worker.mjs' },
  { entry: 'lib/uploads/check-worker.ts', out: 'upload-worker.mjs' },
  { entry: 'lib/geometry/features-thread.ts', out: 'features-thread.mjs' },
  { entry: 'lib/pipeline/analysis-helper-thread.ts', out: 'analysis-helper-thread.mjs' },
  { entry: 'lib/viewer/index-worker.ts', out: 'viewer-index-worker.mjs' },
  { entry: 'lib/pipeline/tiled/tile-thread.ts', out: 'tile-thread.mjs' },
];

const esbuild = createRequire(path.join(root, 'package.json'))('esbuild');
mkdirSync(OUT_DIR, { recursive: true });
for (const { entry, out } of ENTRIES) {
  const t0 = Date.now();
  const OUT = path.join(OUT_DIR, out);
  const result = await esbuild.build({
    absWorkingDir: root,
    entryPoints: [entry],
    bundle: true,
    platform: 'node',
    format: 'esm',
    target: 'node20',
    write: false,
    metafile: true,
    logLevel: 'silent',
    outfile: OUT,
    // CommonJS dependencies bundled into an ES module still call require() for Node built-ins.
    banner: { js: "import { createRequire as __trenchantRequire } from 'node:module'; const require = __trenchantRequire(import.meta.url);" },
  });
  const file = result.outputFiles.find((f) => f.path.endsWith('.mjs'));
  if (!file) throw new Error(`esbuild produced no file for ${entry}`);
  const tmp = `${OUT}.${process.pid}.tmp`;
  const inputs = Object.keys(result.metafile.inputs).filter((p) => !p.includes('node_modules'));
  writeFileSync(`${tmp}.inputs`, JSON.stringify(inputs));
  writeFileSync(tmp, file.contents);
  renameSync(`${tmp}.inputs`, `${OUT}.inputs.json`);
  renameSync(tmp, OUT);
  console.log(`[trenchant] ${entry} compiled to ${path.relative(root, OUT)} in ${Date.now() - t0} ms`);
}
