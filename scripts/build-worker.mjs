// Compiles the analysis worker (lib/pipeline/worker.ts and everything it imports) into one ES module that worker
// threads can load under `next start`, where Next's bundle has no separate worker file. Run by `npm run build`,
// and by the server itself (lib/jobs/worker-file.ts) when the file is missing or older than its sources, so
// `next build` alone, the test helper and `next dev` work too. Kept out of .next, which `next build` empties.
// Writes to a temporary name and renames, so concurrent builders and running pools never see half a file.
// Output: node_modules/.cache/trenchant/analysis-worker.mjs + analysis-worker.mjs.inputs.json (source files, for staleness).
import { createRequire } from 'node:module';
import { mkdirSync, renameSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');
const ENTRY = 'lib/pipeline/worker.ts';
const OUT = path.join(root, 'node_modules', '.cache', 'trenchant', 'analysis-worker.mjs');

const t0 = Date.now();
const esbuild = createRequire(path.join(root, 'package.json'))('esbuild');
const result = await esbuild.build({
  absWorkingDir: root,
  entryPoints: [ENTRY],
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
if (!file) throw new Error('esbuild produced no worker file');
mkdirSync(path.dirname(OUT), { recursive: true });
const tmp = `${OUT}.${process.pid}.tmp`;
const inputs = Object.keys(result.metafile.inputs).filter((p) => !p.includes('node_modules'));
writeFileSync(`${tmp}.inputs`, JSON.stringify(inputs));
writeFileSync(tmp, file.contents);
renameSync(`${tmp}.inputs`, `${OUT}.inputs.json`);
renameSync(tmp, OUT);
console.log(`[trenchant] analysis worker compiled to ${path.relative(root, OUT)} in ${Date.now() - t0} ms`);
