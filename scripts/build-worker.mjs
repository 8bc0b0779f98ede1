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
// The command line's bundle (cli.mjs, same folder) is not built here: scripts/cli.mjs builds it on first use, so the
// server's on-demand build stays as short as before.
// Run by `npm run build`, and by the server itself (lib/jobs/worker-file.ts) when a file is missing or older than
// its sources, so `next build` alone, the test helper and `next dev` work too. Kept out of .next, which
// `next build` empties. Output in node_modules/.cache/trenchant/ (scripts/esbuild-entries.mjs does the work).
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { compileEntries, ENTRIES } from './esbuild-entries.mjs';

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');
await compileEntries(root, ENTRIES.filter((e) => e.out !== 'cli.mjs'), (line) => console.log(line));
