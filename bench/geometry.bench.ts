/**
 * Geometry engine benchmark: 1 M polygons over 10 mm × 10 mm (bench/geometry-layout.ts, seeded).
 * Stages: tiled union → coverage raster (10 µm pixels) → window density 100/50 and 700/70 µm → effective density
 * (Gaussian L = 500 µm and 4 mm) → features with widths → feature index. Targets: < 10 s in all, < 2 GB peak.
 * Run: npm run bench, or npx tsx bench/geometry.bench.ts
 */
import { pathToFileURL } from 'node:url';
import { effectiveDensity, featuresFromRegions, FeatureIndex, openRegions, rasterizeOpenRegions, windowDensity, type Grid } from '../lib/geometry';
import { benchLayout } from './geometry-layout';

export default async function geometryBench(): Promise<void> {
  let peak = 0;
  const sample = () => (peak = Math.max(peak, process.memoryUsage().rss));
  const timer = setInterval(sample, 20);
  const rows: [string, number][] = [];
  const stage = <T>(name: string, fn: () => T): T => {
    const t0 = performance.now();
    const r = fn();
    rows.push([name, performance.now() - t0]);
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
  const feats = stage('features + widths', () => featuresFromRegions(regions));
  stage('feature index (rbush)', () => new FeatureIndex(feats));
  clearInterval(timer);
  sample();
  const counted = rows.slice(1).reduce((s, [, ms]) => s + ms, 0);
  const kinds: Record<string, number> = {};
  for (const f of feats) kinds[f.kind] = (kinds[f.kind] ?? 0) + 1;
  console.log(`geometry bench: ${set.count} polygons, ${regions.pieceCount} union pieces, ${feats.length} features ${JSON.stringify(kinds)}`);
  for (const [name, ms] of rows) console.log(`  ${name.padEnd(40)} ${(ms / 1000).toFixed(2).padStart(7)} s`);
  console.log(`  ${'total (without generation)'.padEnd(40)} ${(counted / 1000).toFixed(2).padStart(7)} s   target < 10 s`);
  console.log(`  peak RSS ${(peak / 2 ** 20).toFixed(0)} MiB (max RSS ${(process.resourceUsage().maxRSS / 1024).toFixed(0)} MiB)   target < 2048 MiB`);
  console.log(`  check: 100/50 ${w1.nx}×${w1.ny} min ${w1.min.toFixed(6)} max ${w1.max.toFixed(6)} mean ${w1.mean.toFixed(6)}; 700/70 ${w2.nx}×${w2.ny} min ${w2.min.toFixed(6)} max ${w2.max.toFixed(6)}; global ${w1.globalDensity.toFixed(6)}`);
  console.log(`  check: effective density centre L=500 ${e1[500 * 1000 + 500]?.toFixed(4)}, L=4mm ${e2[500 * 1000 + 500]?.toFixed(4)}`);
}

if (import.meta.url === pathToFileURL(process.argv[1] ?? '').href) await geometryBench();
