/**
 * Geometry engine benchmark: 1 M polygons over 10 mm × 10 mm (bench/geometry-layout.ts, seeded).
 * Stages: tiled union → coverage raster (10 µm pixels) → window density 100/50 and 700/70 µm → effective density
 * (Gaussian L = 500 µm and 4 mm) → features with widths → feature index. Targets: < 10 s in all, < 2 GB peak.
 * Run: npm run bench, or npx tsx bench/geometry.bench.ts. The feature stage runs twice: on one thread, and through
 * featuresInThreads (the pipeline's two-thread path). Each stage reports wall and CPU time and the load average.
 */
import { availableParallelism, loadavg } from 'node:os';
import { pathToFileURL } from 'node:url';
import { effectiveDensity, featuresFromRegions, FeatureIndex, openRegions, rasterizeOpenRegions, windowDensity, type Grid } from '../lib/geometry';
import { featuresInThreads } from '../lib/geometry/parallel-features';
import { benchLayout } from './geometry-layout';

export default async function geometryBench(): Promise<void> {
  let peak = 0;
  const sample = () => (peak = Math.max(peak, process.memoryUsage().rss));
  const timer = setInterval(sample, 20);
  // Wall and CPU (user + system) time per stage: on a shared machine the CPU figure is the steadier one.
  const rows: [string, number, number][] = [];
  const stage = <T>(name: string, fn: () => T): T => {
    const t0 = performance.now();
    const c0 = process.cpuUsage();
    const r = fn();
    const cu = process.cpuUsage(c0);
    rows.push([name, performance.now() - t0, (cu.user + cu.system) / 1000]);
    sample();
    return r;
  };
  const set = stage('generate 1M polygons (not counted)', () => benchLayout());
  const dbu = 0.001;
  const regions = stage('union (tiled clipper)', () => openRegions(set, dbu, { regionDbu: [0, 0, 10_000_000, 10_000_000] }));
  const grid: Grid = { x0Um: 0, y0Um: 0, pixelUm: 10, nx: 1000, ny: 1000 };
  const cov = stage('coverage raster 1000×1000', () => rasterizeOpenRegions(regions, grid));
  const w1 = stage('window density 100/50 µm', () => windowDensity(cov, grid, { windowUm: 100, stepUm: 50 }));
  const w2 = stage('window density 700/70 µm', () => windowDensity(cov, grid, { windowUm: 700, stepUm: 70 }));
  const e1 = stage('effective density L = 500 µm', () => effectiveDensity(cov, grid, { lengthUm: 500 }));
  const e2 = stage('effective density L = 4 mm', () => effectiveDensity(cov, grid, { lengthUm: 4000 }));
  const feats = stage('features + widths (1 thread)', () => featuresFromRegions(regions));
  // The pipeline's path: the calling thread and one worker (start-up and copying the regions included).
  const info: { threads?: number } = {};
  const t0 = performance.now();
  const threaded = featuresInThreads(regions, {}, info);
  const nWorkers = info.threads ?? 1;
  rows.push([`features + widths (${nWorkers} threads, wall only)`, performance.now() - t0, NaN]);
  if (threaded.length !== feats.length || threaded.some((f, k) => f.minWidthUm !== feats[k]?.minWidthUm || f.maxWidthUm !== feats[k]?.maxWidthUm)) throw new Error('two-thread features differ from the single-thread run');
  stage('feature index (rbush)', () => new FeatureIndex(feats));
  clearInterval(timer);
  sample();
  // Two totals: with the feature stage on one thread, and with it sharded over two workers.
  const sum = (skip: RegExp, col: 1 | 2) => rows.slice(1).filter((r) => !skip.test(r[0])).reduce((s, r) => s + r[col], 0);
  const counted = sum(/threads/, 1), countedCpu = sum(/threads/, 2);
  const counted2 = sum(/1 thread/, 1);
  const kinds: Record<string, number> = {};
  for (const f of feats) kinds[f.kind] = (kinds[f.kind] ?? 0) + 1;
  console.log(`geometry bench: ${set.count} polygons, ${regions.pieceCount} union pieces, ${feats.length} features ${JSON.stringify(kinds)}`);
  console.log(`  load average ${loadavg().map((v) => v.toFixed(2)).join(' ')} on ${availableParallelism()} cores`);
  console.log(`  ${'stage'.padEnd(40)} ${'wall'.padStart(9)} ${'cpu'.padStart(9)}`);
  const secs = (ms: number) => (Number.isNaN(ms) ? '      –  ' : `${(ms / 1000).toFixed(2).padStart(7)} s`);
  for (const [name, ms, cpu] of rows) console.log(`  ${name.padEnd(40)} ${secs(ms)} ${secs(cpu)}`);
  console.log(`  ${'total, features on 1 thread'.padEnd(40)} ${secs(counted)} ${secs(countedCpu)}   target < 10 s (without generation)`);
  console.log(`  ${`total, features on ${nWorkers} threads`.padEnd(40)} ${secs(counted2)}`);
  console.log(`  peak RSS ${(peak / 2 ** 20).toFixed(0)} MiB (max RSS ${(process.resourceUsage().maxRSS / 1024).toFixed(0)} MiB)   target < 2048 MiB`);
  console.log(`  check: 100/50 ${w1.nx}×${w1.ny} min ${w1.min.toFixed(6)} max ${w1.max.toFixed(6)} mean ${w1.mean.toFixed(6)}; 700/70 ${w2.nx}×${w2.ny} min ${w2.min.toFixed(6)} max ${w2.max.toFixed(6)}; global ${w1.globalDensity.toFixed(6)}`);
  console.log(`  check: effective density centre L=500 ${e1[500 * 1000 + 500]?.toFixed(4)}, L=4mm ${e2[500 * 1000 + 500]?.toFixed(4)}`);
}

if (import.meta.url === pathToFileURL(process.argv[1] ?? '').href) await geometryBench();
