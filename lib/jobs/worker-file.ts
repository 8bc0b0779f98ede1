/**
 * Locates the compiled worker files (scripts/build-worker.mjs → node_modules/.cache/trenchant/analysis-worker.mjs
 * and upload-worker.mjs, with features-thread.mjs and tile-thread.mjs beside the analysis worker) and builds them when missing or older than their TypeScript sources. The build runs as a
 * child process (esbuild), so nothing here depends on how Next bundled the server. TRENCHANT_WORKER_FILE overrides
 * the analysis worker's path, TRENCHANT_UPLOAD_WORKER_FILE the upload worker's (no build then).
 */
import { execFile } from 'node:child_process';
import { existsSync, readFileSync, statSync } from 'node:fs';
import path from 'node:path';

// Under node_modules/.cache: `next build` empties .next, which would pull the file from under a running server.
const OUT_DIR_REL = path.join('node_modules', '.cache', 'trenchant');
const OUT_REL = path.join(OUT_DIR_REL, 'analysis-worker.mjs');
const UPLOAD_OUT_REL = path.join(OUT_DIR_REL, 'upload-worker.mjs');
const FEATURES_OUT_REL = path.join(OUT_DIR_REL, 'features-thread.mjs');
// Tile jobs of a tiled analysis (lib/pipeline/tiled/tile-pool.ts finds it beside analysis-worker.mjs).
const TILE_OUT_REL = path.join(OUT_DIR_REL, 'tile-thread.mjs');
const HELPER_OUT_REL = path.join(OUT_DIR_REL, 'analysis-helper-thread.mjs');
const ENTRY_REL = path.join('lib', 'pipeline', 'worker.ts');

function projectRoot(): string {
  return process.env.TRENCHANT_ROOT ?? process.cwd();
}

/** Null when the compiled worker is up to date, else why it needs building. */
export function workerStaleReason(root = projectRoot()): string | null {
  return (
    fileStaleReason(root, OUT_REL) ??
    fileStaleReason(root, UPLOAD_OUT_REL) ??
    fileStaleReason(root, FEATURES_OUT_REL) ??
    fileStaleReason(root, TILE_OUT_REL) ??
    fileStaleReason(root, HELPER_OUT_REL)
  );
}

/**
 * The compiled analysis helper thread (analysis-helper-thread.mjs) when it is built and up to date, else null:
 * code run from source (the CLI) starts it from there instead of through tsx, which loads in a fraction of the time.
 */
export function freshHelperThreadFile(root = projectRoot()): string | null {
  try {
    return fileStaleReason(root, HELPER_OUT_REL) === null ? path.join(/*turbopackIgnore: true*/ root, HELPER_OUT_REL) : null;
  } catch {
    return null;
  }
}

function fileStaleReason(root: string, outRel: string): string | null {
  const out = path.join(/*turbopackIgnore: true*/ root, outRel);
  const manifest = `${out}.inputs.json`;
  if (!existsSync(/*turbopackIgnore: true*/ out) || !existsSync(/*turbopackIgnore: true*/ manifest)) return 'not built yet';
  if (!existsSync(/*turbopackIgnore: true*/ path.join(/*turbopackIgnore: true*/ root, ENTRY_REL))) return null; // deployed without sources: use what is there
  const builtAt = statSync(/*turbopackIgnore: true*/ out).mtimeMs;
  let inputs: unknown;
  try {
    inputs = JSON.parse(readFileSync(/*turbopackIgnore: true*/ manifest, 'utf8'));
  } catch {
    return 'its input list is unreadable';
  }
  if (!Array.isArray(inputs)) return 'its input list is unreadable';
  for (const rel of inputs) {
    const p = path.join(/*turbopackIgnore: true*/ root, String(rel));
    if (!existsSync(/*turbopackIgnore: true*/ p)) return `${String(rel)} was removed`;
    if (statSync(/*turbopackIgnore: true*/ p).mtimeMs > builtAt) return `${String(rel)} changed`;
  }
  return null;
}

function runBuild(root: string): Promise<void> {
  return new Promise((resolve, reject) => {
    execFile(process.execPath, [path.join(/*turbopackIgnore: true*/ root, 'scripts', 'build-worker.mjs')], { cwd: root, timeout: 120_000 }, (err, _stdout, stderr) => {
      if (err) reject(new Error(`could not compile the analysis worker: ${stderr.trim().split('\n').slice(-3).join(' ') || err.message}`));
      else resolve();
    });
  });
}

type BuiltSlot = '__trenchantWorkerFile' | '__trenchantUploadWorkerFile';
// On globalThis: Next's dev server reloads modules, and one build per process is the point.
const holder = globalThis as typeof globalThis & { [slot in BuiltSlot]?: Promise<string> };

/**
 * Absolute path of an up-to-date compiled file: `override` as given, else `outRel` under the project, built once per
 * process when `staleReason` finds it stale. A failed build is retried on the next call.
 */
function builtFile(slot: BuiltSlot, override: string | undefined, outRel: string, staleReason: (root: string) => string | null, what: string): Promise<string> {
  if (override) return Promise.resolve(path.resolve(override));
  const pending = (holder[slot] ??= (async () => {
    const root = projectRoot();
    const reason = staleReason(root);
    if (reason) {
      console.log(`[trenchant] compiling ${what} (${reason})`);
      await runBuild(root);
    }
    return path.join(/*turbopackIgnore: true*/ root, outRel);
  })());
  pending.catch(() => {
    if (holder[slot] === pending) holder[slot] = undefined;
  });
  return pending;
}

/** Absolute path of an up-to-date worker file (built once per process when needed). */
export function workerFile(): Promise<string> {
  return builtFile('__trenchantWorkerFile', process.env.TRENCHANT_WORKER_FILE, OUT_REL, workerStaleReason, 'the analysis worker');
}

/** Absolute path of an up-to-date upload check worker (built with the analysis worker when needed). */
export function uploadWorkerFile(): Promise<string> {
  return builtFile('__trenchantUploadWorkerFile', process.env.TRENCHANT_UPLOAD_WORKER_FILE, UPLOAD_OUT_REL, (root) => fileStaleReason(root, UPLOAD_OUT_REL), 'the worker files');
}

/** Drop the cached path so the next workerFile() checks (and if needed rebuilds) again. */
export function forgetWorkerFile(): void {
  holder.__trenchantWorkerFile = undefined;
}
