/**
 * Tiled analysis end to end on a generated layout (bench/tiled-source.ts: one polygon per 10 µm site, generated per
 * window, never whole in memory) with 1 and 2 worker threads: the plan, the tile phase (read, union, coverage,
 * openings — summed over workers), re-reads for wide openings, the global stages, peak memory per worker (its heap
 * + buffers, sampled inside each job) and the process's peak RSS.
 * Run by hand: nice -n 10 npx tsx bench/tiled.bench.ts [sites] [threads,...] [verify|-] [auto|memory|spill]
 * (default 3163 sites² ≈ 10 M polygons, threads 1,2; `verify` also runs the untiled pipeline on the whole layout
 * and compares every value; the last argument keeps the openings in memory or spills them, default: by count).
 * Also `npm run bench -- tiled` (environment TILED_SITES, TILED_THREADS, TILED_VERIFY=verify, TILED_SPILL).
 */
import { rmSync } from 'node:fs';
import { loadavg } from 'node:os';
import { pathToFileURL } from 'node:url';
import { parseProcessModel } from '../lib/etch';
import { analysisSettingsSchema } from '../lib/pipeline/settings';
import { runTiledAnalysis } from '../lib/pipeline/tiled/run-tiled';
import { runAnalysis } from '../lib/pipeline/run-analysis';
import { BENCH_MODEL } from './geometry-layout';
import { openGeneratedSource } from './tiled-source';

const mb = (b: number) => `${(b / 2 ** 20).toFixed(0)} MiB`;
const s = (ms: number) => `${(ms / 1000).toFixed(1)} s`;

export default async function tiledBench(argv: string[] = []): Promise<void> {
  const sites = Number(argv[0] ?? process.env.TILED_SITES ?? 3163);
  const threadList = (argv[1] ?? process.env.TILED_THREADS ?? '1,2').split(',').map(Number);
  const verify = (argv[2] ?? process.env.TILED_VERIFY) === 'verify';
  const spillMode = argv[3] ?? process.env.TILED_SPILL ?? 'auto';
  const spill = spillMode === 'memory' ? null : spillMode === 'spill' ? { minOpenings: 0 } : undefined;
  const model = parseProcessModel(BENCH_MODEL);
  if (!model.ok) throw new Error('bench model invalid');
  const settings = analysisSettingsSchema.parse({ etchLayers: [{ layer: 1, datatype: 0 }], limits: { minDensity: 0.05, maxDensity: 0.5, minWidthUm: 1 } });
  const args = { sites, seed: 4242 };
  const spec = { kind: 'module' as const, url: new URL('./tiled-source.ts', import.meta.url).href, exportName: 'openGeneratedSource', args };
  let t = performance.now();
  const source = openGeneratedSource(args);
  console.log(`layout: ${sites}² sites = ${(sites * sites / 1e6).toFixed(2)} M polygons over ${(sites * 0.01).toFixed(1)} mm square (header pass ${s(performance.now() - t)})`);
  for (const threads of threadList) {
    t = performance.now();
    const r = await runTiledAnalysis(source, settings, model.model, { threads, spec, ...(spill !== undefined ? { spill } : {}) });
    if (r.featureFile) rmSync(r.featureFile.path);
    const total = performance.now() - t;
    const x = r.tiled, p = x.plan;
    console.log(`\n-- ${threads} worker thread(s) (used ${x.threads}, ${x.via}); load average ${loadavg().map((v) => v.toFixed(1)).join(' ')} --`);
    console.log(`plan: ${x.tiles} tiles of ${p.tileUm} µm (${p.tilePx} px of ${p.grid.pixelUm} µm, grid ${p.grid.nx}×${p.grid.ny}), margin ${p.marginDbu * p.dbuUm} µm, union lattice ${p.latticeDbu * p.dbuUm} µm`);
    console.log(`tile phase ${s(x.tilePhaseMs)} wall; per-job sums: read ${s(x.jobMs.read)}, union ${s(x.jobMs.union)}, coverage ${s(x.jobMs.raster)}, openings ${s(x.jobMs.features)}`);
    console.log(`re-reads for wide openings: ${x.growJobs} (largest margin ${(x.largestMarginDbu * p.dbuUm).toFixed(0)} µm); polygons read / polygons = ${x.readAmplification}`);
    const tm = r.summary.timingsMs;
    console.log(`global stages: ${['window-density', 'effective-density', 'local-width', 'prediction', 'maps', 'flags', 'summary'].map((k) => `${k} ${s(tm[k] ?? 0)}`).join(', ')}`);
    console.log(`openings ${r.summary.features.count}, flags ${r.summary.flags.total}; ${r.featureFile ? `spilled (${r.spillCursors} runs open at most, feature file ${mb(r.featureFile.bytes)})` : 'in memory'}; total ${s(total)}`);
    console.log(`peak memory per worker (heap + buffers): ${x.peakBytesPerWorker.map(mb).join(', ')}; process peak RSS so far ${mb(process.resourceUsage().maxRSS * 1024)}`);
    if (verify) {
      // The untiled pipeline on the same polygons (materialised whole): everything must be identical.
      t = performance.now();
      const whole = source.readTile(source.header.bboxDbu as [number, number, number, number], [{ layer: 0, datatype: 0 }, { layer: 1, datatype: 0 }]);
      const ref = runAnalysis({ ...whole, bboxDbu: source.header.bboxDbu }, settings, model.model);
      const strip = (v: typeof r.summary) => JSON.stringify({ ...v, timingsMs: null });
      const bytes = (a: ArrayBufferView) => Buffer.from(a.buffer, a.byteOffset, a.byteLength);
      const same =
        strip(ref.summary) === strip(r.summary) &&
        (r.featureFile !== undefined || JSON.stringify(ref.features) === JSON.stringify(r.features)) &&
        JSON.stringify(ref.flags) === JSON.stringify(r.flags) &&
        ref.maps.every((m, k) => bytes(m.values).equals(bytes((r.maps[k] as typeof m).values)));
      console.log(`untiled reference: ${s(performance.now() - t)} (stages ${Object.entries(ref.summary.timingsMs).map(([k, v]) => `${k} ${s(v)}`).join(', ')}); tiled result identical: ${same ? 'yes' : 'NO'}`);
    }
  }
  source.close();
}

if (import.meta.url === pathToFileURL(process.argv[1] ?? '').href) await tiledBench(process.argv.slice(2));
