/**
 * Child process for tiled-spill.test.ts: one tiled analysis of the generated bench layout (bench/tiled-source.ts,
 * sites² polygons made per window) with its openings in memory or spilled, printing the peak of this thread's
 * live JS heap + ArrayBuffer memory (after a forced GC; run with --expose-gc), sampled at every progress call of
 * the global stages (every chunk of a spilled run). Usage: tsx spill-memory-child.ts SITES memory|spill DIR
 */
import { parseProcessModel } from '@/lib/etch';
import { analysisSettingsSchema } from '@/lib/pipeline/settings';
import { runTiledAnalysis } from '@/lib/pipeline/tiled/run-tiled';
import { BENCH_MODEL } from '../../bench/geometry-layout';
import { openGeneratedSource } from '../../bench/tiled-source';
import { rmSync } from 'node:fs';

const [sitesArg, mode, dir] = process.argv.slice(2);
const model = parseProcessModel(BENCH_MODEL);
if (!model.ok) throw new Error('bench model invalid');
const settings = analysisSettingsSchema.parse({ etchLayers: [{ layer: 1, datatype: 0 }], pixel: { sizeUm: 'auto', maxPixels: 10_000 }, maxListedFlags: 100, limits: { minDensity: 0.05, maxDensity: 0.5, minWidthUm: 1 } });
const source = openGeneratedSource({ sites: Number(sitesArg), seed: 4242 });
const gc = (globalThis as { gc?: () => void }).gc;
let peak = 0, samples = 0;
// Live memory only: collected first. Sampled in the global stages (where the in-memory path holds every opening
// twice over); the tile phase holds one tile at a time in both paths.
let last = -1;
const sample = (stage: string, f: number) => {
  if (stage === 'coverage' || stage === 'features' || (f < last + 0.01 && stage !== 'done')) return;
  last = f;
  gc?.();
  const m = process.memoryUsage();
  peak = Math.max(peak, m.heapUsed + m.arrayBuffers);
  samples++;
};
gc?.();
const base = process.memoryUsage();
const r = await runTiledAnalysis(source, settings, model.model, {
  tileUm: 500,
  threads: 0,
  spill: mode === 'spill' ? { dir: dir as string, minOpenings: 0, chunkRows: 8192 } : null,
  onProgress: sample,
});
if (r.featureFile) rmSync(r.featureFile.path);
console.log(JSON.stringify({ openings: r.summary.features.count, peakBytes: peak - (base.heapUsed + base.arrayBuffers), samples, grid: r.summary.grid, flags: r.summary.flags.total }));
