// Compiles TypeScript entries into self-contained ES modules in node_modules/.cache/trenchant/ (esbuild, which tsx
// already brings), and tells whether a compiled file is older than its sources. Shared by scripts/build-worker.mjs
// (the app's worker files) and scripts/cli.mjs (the command line). Each output gets <file>.inputs.json listing
// its sources (the project's own files, plus package-lock.json so a dependency upgrade also counts as a change);
// lib/jobs/worker-file.ts reads the same lists. Files are written under temporary names and renamed, so
// concurrent builders and running processes never see half a file.
import { createRequire } from 'node:module';
import { existsSync, mkdirSync, readdirSync, readFileSync, renameSync, statSync, unlinkSync, writeFileSync } from 'node:fs';
import path from 'node:path';

export const OUT_DIR_REL = path.join('node_modules', '.cache', 'trenchant');

export const ENTRIES = [
  { entry: 'lib/pipeline/worker.ts', out: 'analysis-worker.mjs' },
  { entry: 'lib/uploads/check-worker.ts', out: 'upload-worker.mjs' },
  { entry: 'lib/geometry/features-thread.ts', out: 'features-thread.mjs' },
  { entry: 'lib/pipeline/analysis-helper-thread.ts', out: 'analysis-helper-thread.mjs' },
  { entry: 'lib/viewer/index-worker.ts', out: 'viewer-index-worker.mjs' },
  { entry: 'lib/pipeline/tiled/tile-thread.ts', out: 'tile-thread.mjs' },
  // Split: each command, and the tiled path of `check`, is its own chunk (cli-chunk-<hash>.mjs beside it), so a
  // command parses only what it imports.
  { entry: 'lib/cli/main.ts', out: 'cli.mjs', split: true },
];

/** Null when `out` (a file name in the output folder) is built and newer than every source it lists, else why not. */
export function staleReason(root, out) {
  const file = path.join(root, OUT_DIR_REL, out);
  const manifest = `${file}.inputs.json`;
  if (!existsSync(file) || !existsSync(manifest)) return 'not built yet';
  const entry = ENTRIES.find((e) => e.out === out);
  if (entry && !existsSync(path.join(root, entry.entry))) return null; // installed without sources: use what is there
  const builtAt = statSync(file).mtimeMs;
  let inputs;
  try {
    inputs = JSON.parse(readFileSync(manifest, 'utf8'));
  } catch {
    return 'its input list is unreadable';
  }
  if (!Array.isArray(inputs)) return 'its input list is unreadable';
  for (const rel of inputs) {
    const p = path.join(root, String(rel));
    if (!existsSync(p)) return `${String(rel)} was removed`;
    if (statSync(p).mtimeMs > builtAt) return `${String(rel)} changed`;
  }
  return null;
}

/** Compile the given entries (items of ENTRIES); `log` receives one line per file. */
export async function compileEntries(root, entries, log = () => {}) {
  const esbuild = createRequire(path.join(root, 'package.json'))('esbuild');
  const outDir = path.join(root, OUT_DIR_REL);
  mkdirSync(outDir, { recursive: true });
  const lock = existsSync(path.join(root, 'package-lock.json')) ? ['package-lock.json'] : [];
  for (const { entry, out, split } of entries) {
    const t0 = Date.now();
    const OUT = path.join(outDir, out);
    const result = await esbuild.build({
      absWorkingDir: root,
      entryPoints: { [out.replace(/\.mjs$/, '')]: entry },
      bundle: true,
      splitting: split === true,
      platform: 'node',
      format: 'esm',
      target: 'node20',
      write: false,
      metafile: true,
      logLevel: 'silent',
      outdir: outDir,
      outExtension: { '.js': '.mjs' },
      chunkNames: `${CHUNK_PREFIX}[hash]`,
      // CommonJS dependencies bundled into an ES module still call require() for Node built-ins.
      banner: { js: "import { createRequire as __trenchantRequire } from 'node:module'; const require = __trenchantRequire(import.meta.url);" },
    });
    const file = result.outputFiles.find((f) => f.path === OUT);
    if (!file) throw new Error(`esbuild produced no file for ${entry}`);
    const tmp = `${OUT}.${process.pid}.tmp`;
    // Chunks first (content-hashed names: a concurrent build writes the same bytes), the entry that imports them last.
    const chunks = result.outputFiles.filter((f) => f !== file && f.path.endsWith('.mjs'));
    for (const c of chunks) {
      writeFileSync(tmp, c.contents);
      renameSync(tmp, c.path);
    }
    const inputs = [...Object.keys(result.metafile.inputs).filter((p) => !p.includes('node_modules')), ...lock];
    writeFileSync(`${tmp}.inputs`, JSON.stringify(inputs));
    writeFileSync(tmp, file.contents);
    // The list goes first: a reader that sees the new file with the old list would only rebuild once more.
    renameSync(`${tmp}.inputs`, `${OUT}.inputs.json`);
    renameSync(tmp, OUT);
    if (split) dropOldChunks(outDir, new Set(chunks.map((c) => path.basename(c.path))));
    log(`[trenchant] ${entry} compiled to ${path.relative(root, OUT)}${chunks.length ? ` and ${chunks.length} chunks` : ''} in ${Date.now() - t0} ms`);
  }
}

const CHUNK_PREFIX = 'cli-chunk-';

/** Remove chunks of earlier builds, once they are an hour old (a command still running from one may yet load it). */
function dropOldChunks(outDir, keep) {
  const cutoff = Date.now() - 3600_000;
  for (const name of readdirSync(outDir)) {
    if (!name.startsWith(CHUNK_PREFIX) || keep.has(name)) continue;
    try {
      if (statSync(path.join(outDir, name)).mtimeMs < cutoff) unlinkSync(path.join(outDir, name));
    } catch {
      // another builder removed it first
    }
  }
}
