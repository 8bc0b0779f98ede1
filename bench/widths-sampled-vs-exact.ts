/**
 * Sampled lattice vs exact Manhattan lattice on seeded random unions of 2–4 trenches (vertices on a 200 dbu grid, so
 * the exact lattice applies; `sampledLattice: true` forces the sampled one, as 1 nm vertices do in real layouts).
 * Prints how often and by how much the two disagree. `node --import tsx bench/widths-sampled-vs-exact.ts [trials]`
 */
import { extractFeatures } from '../lib/geometry';
import { mulberry32 } from '../lib/random';

const rect = (x0: number, y0: number, x1: number, y1: number) => [x0, y0, x1, y0, x1, y1, x0, y1];
const trials = Number(process.argv[2] ?? 400);
const rnd = mulberry32(2026);
const devMin: number[] = [], devMax: number[] = [];
for (let trial = 0; trial < trials; trial++) {
  const rings: number[][] = [];
  const k = 2 + Math.floor(rnd() * 3);
  for (let q = 0; q < k; q++) {
    const x = 200 * Math.floor(rnd() * 40), y = 200 * Math.floor(rnd() * 40);
    const w = 200 * (3 + Math.floor(rnd() * 10)), len = 200 * (10 + Math.floor(rnd() * 40));
    rings.push(rnd() < 0.5 ? rect(x, y, x + len, y + w) : rect(x, y, x + w, y + len));
  }
  const coords = Float64Array.from(rings.flat());
  const offsets = Uint32Array.from([0, ...rings.map((_, i) => 4 * (i + 1))]);
  const set = { layer: 1, datatype: 0, coords, offsets, count: rings.length };
  const exact = extractFeatures(set, 0.001);
  const sampled = extractFeatures(set, 0.001, { sampledLattice: true });
  exact.forEach((f, i) => {
    const s = sampled[i];
    if (!s || f.widthStepUm === 0 || !f.widthExact) return;
    devMin.push(s.minWidthUm / f.minWidthUm - 1);
    devMax.push(s.maxWidthUm / f.maxWidthUm - 1);
  });
}
const stats = (d: number[]) => {
  const a = d.map(Math.abs).sort((p, q) => p - q);
  return `n ${a.length}, |rel| max ${(100 * a[a.length - 1]!).toFixed(2)} %, > 1e-6: ${a.filter((v) => v > 1e-6).length} (sampled higher ${d.filter((v) => v > 1e-6).length}, lower ${d.filter((v) => v < -1e-6).length}), > 1 %: ${a.filter((v) => v > 0.01).length}`;
};
console.log(`minWidth: ${stats(devMin)}\nmaxWidth: ${stats(devMax)}`);
