/**
 * Child process of bench/large-layout.bench.ts, so its peak RSS belongs to one server step alone.
 * Usage: tsx bench/large-layout-child.ts check-index|check-whole|analyse-tiled|analyse-whole FILE (pixel: BENCH_PIXEL_UM, default 10)
 * Prints one JSON line: seconds, peak RSS, and what the step found.
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import analyse from '../lib/pipeline/worker';
import { checkLayoutFile } from '../lib/uploads/check-layout';
import { checkGdsiiByIndex } from '../lib/uploads/check-indexed';

const [step, file] = process.argv.slice(2) as [string, string];
const limits = { maxPolygons: 1e9, maxPoints: 1e10 };
const t0 = performance.now();
let found: unknown;
if (step === 'check-index') {
  const r = checkGdsiiByIndex(file, limits);
  found = r.ok ? { polygons: r.polygonCount, layers: r.layers.length } : r.message;
} else if (step === 'check-whole') {
  const r = await checkLayoutFile(file, limits);
  found = r.ok ? { polygons: r.polygonCount, layers: r.layers.length } : r.message;
} else {
  const outDir = mkdtempSync(join(tmpdir(), 'trenchant-bench-large-'));
  const r = await analyse({ layoutPath: file, settings: { etchLayers: [{ layer: 1, datatype: 0 }], pixel: { sizeUm: Number(process.env.BENCH_PIXEL_UM ?? 10) } }, model: JSON.parse(process.env.BENCH_MODEL ?? '{}'), outDir, wholeReadBytes: step === 'analyse-tiled' ? 0 : 1e15 });
  rmSync(outDir, { recursive: true, force: true });
  found = r.ok ? { openings: r.summary.features.count, flags: r.summary.flags.total, tiled: r.summary.tiled ?? null, pixelUm: r.summary.grid.pixelUm } : `${r.code}: ${r.message}`;
}
console.log(JSON.stringify({ step, seconds: Math.round((performance.now() - t0) / 100) / 10, peakRssMiB: Math.round(process.resourceUsage().maxRSS / 1024), found }));
