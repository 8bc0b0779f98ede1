/**
 * Width methods against exact references on seeded random unions of 2–4 trenches:
 * 1. vertices on a 200 dbu grid, where the uniform exact Manhattan lattice applies: the compressed lattice (default
 *    path) and the sampled lattice (`sampledLattice: true`, what 1 nm vertices used to get) against it;
 * 2. vertices on a 1 dbu grid, small enough for the brute-force 1/2-dbu grid (tests/geometry/brute-widths.ts): the
 *    compressed lattice and the sampled lattice (`uniformLattice: true`) against it;
 * 3. optionally the lattice-path openings of a real layout (a bench/widths-dump.ts file): time per opening of the
 *    compressed and the uniform paths, and how many Manhattan openings fell back to the uniform paths (node cap).
 * `node --import tsx bench/widths-sampled-vs-exact.ts [trials] [DUMP.bin]`
 */
import { loadavg } from 'node:os';
import { compressedFallbacks, featureWidths, type WidthOptions, type WidthResult } from '../lib/geometry/widths';
import { mulberry32 } from '../lib/random';
import { bruteWidths } from '../tests/geometry/brute-widths';
import { trenchUnion, unionOpenings, type UnionOpening } from '../tests/geometry/trench-unions';
import { readDump } from './widths-run';

const trials = Number(process.argv[2] ?? 400);
const dumpFile = process.argv[3];

const measure = (o: UnionOpening, opts: WidthOptions = {}): WidthResult => featureWidths(o.coords, o.rings, o.bbox, o.area, o.perim, opts);
const stats = (d: number[]) => {
  const a = d.map(Math.abs).sort((p, q) => p - q);
  return `n ${a.length}, |rel| max ${(100 * (a[a.length - 1] ?? 0)).toFixed(2)} %, > 1e-6: ${a.filter((v) => v > 1e-6).length} (higher ${d.filter((v) => v > 1e-6).length}, lower ${d.filter((v) => v < -1e-6).length}), > 1 %: ${a.filter((v) => v > 0.01).length}`;
};

// 1. Coarse grid: against the uniform exact lattice.
{
  const rnd = mulberry32(2026);
  const dev = { cMin: [] as number[], cMax: [] as number[], sMin: [] as number[], sMax: [] as number[] };
  for (let t = 0; t < trials; t++) {
    for (const o of unionOpenings(trenchUnion(rnd, 200, { pos: 8000, w: [600, 2600], len: [2000, 10_000] }))) {
      const exact = measure(o, { uniformLattice: true });
      if (exact.step === 0 || !exact.exact) continue;
      const c = measure(o), s = measure(o, { sampledLattice: true });
      dev.cMin.push(c.minWidth / exact.minWidth - 1);
      dev.cMax.push(c.maxWidth / exact.maxWidth - 1);
      dev.sMin.push(s.minWidth / exact.minWidth - 1);
      dev.sMax.push(s.maxWidth / exact.maxWidth - 1);
    }
  }
  console.log('vertices on a 200 dbu grid, against the uniform exact lattice:');
  console.log(`  compressed minWidth: ${stats(dev.cMin)}\n  compressed maxWidth: ${stats(dev.cMax)}`);
  console.log(`  sampled    minWidth: ${stats(dev.sMin)}\n  sampled    maxWidth: ${stats(dev.sMax)}`);
}

// 2. 1 dbu grid: against the brute force (slow: a fraction of the trials).
{
  const rnd = mulberry32(77);
  const dev = { cMin: [] as number[], cMax: [] as number[], sMin: [] as number[], sMax: [] as number[] };
  let tc = 0, n = 0;
  for (let t = 0; t < Math.max(10, Math.round(trials / 10)); t++) {
    for (const o of unionOpenings(trenchUnion(rnd, 1, { pos: 110, w: [8, 40], len: [25, 160] }))) {
      const t0 = performance.now();
      const c = measure(o);
      tc += performance.now() - t0;
      if (c.step === 0) continue;
      n++;
      const b = bruteWidths(o.local, o.bbox[2] - o.bbox[0], o.bbox[3] - o.bbox[1]);
      const s = measure(o, { uniformLattice: true });
      dev.cMin.push(c.minWidth / b.minWidth - 1);
      dev.cMax.push(c.maxWidth / b.maxWidth - 1);
      dev.sMin.push(s.minWidth / b.minWidth - 1);
      dev.sMax.push(s.maxWidth / b.maxWidth - 1);
    }
  }
  console.log(`vertices on a 1 dbu grid, against the brute-force 1/2-dbu grid (${n} openings, compressed ${((1000 * tc) / Math.max(1, n)).toFixed(0)} µs each):`);
  console.log(`  compressed minWidth: ${stats(dev.cMin)}\n  compressed maxWidth: ${stats(dev.cMax)}`);
  console.log(`  sampled    minWidth: ${stats(dev.sMin)}\n  sampled    maxWidth: ${stats(dev.sMax)}`);
}

// 3. A real layout's lattice-path openings: time per opening, fallbacks.
if (dumpFile) {
  const ops = readDump(dumpFile);
  const time = (opts: WidthOptions) => {
    const c0 = process.cpuUsage();
    for (const f of ops) featureWidths(f.coords, f.rings, f.bbox, f.area, f.perim, opts);
    const c = process.cpuUsage(c0);
    return (c.user + c.system) / ops.length;
  };
  let manhattan = 0;
  for (const f of ops) {
    let m = true;
    for (const [s, e] of f.rings) for (let k = s; k < e && m; k++) {
      const n = k + 1 < e ? k + 1 : s;
      if (f.coords[2 * k] !== f.coords[2 * n] && f.coords[2 * k + 1] !== f.coords[2 * n + 1]) m = false;
    }
    if (m) manhattan++;
  }
  time({}); // warm up both paths once
  time({ uniformLattice: true });
  const before = compressedFallbacks;
  const tc = time({});
  const fallbacks = compressedFallbacks - before;
  const tu = time({ uniformLattice: true });
  console.log(`${dumpFile}: ${ops.length} lattice-path openings, ${manhattan} Manhattan; compressed path ${tc.toFixed(1)} µs CPU each (${fallbacks} fell back to the uniform paths), uniform paths ${tu.toFixed(1)} µs each; load ${loadavg()[0]!.toFixed(2)}`);
}
