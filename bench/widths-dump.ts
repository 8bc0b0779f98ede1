/**
 * Dumps the openings of one layer that take the widths lattice path (neither rectangles, circles nor convex) as
 * the exact `featureWidths` inputs, so widths-compare.ts can time and compare width methods on them alone.
 * `node --import tsx bench/widths-dump.ts FILE.gds L/D OUT.bin` (same union options as the check command, clear polarity).
 */
import { writeFileSync } from 'node:fs';
import ClipperLib from 'clipper-lib';
import { findLayer, readLayout } from '../lib/cli/density';
import { openRegions, ringArea, ringPerimeter, featureWidths, type Box } from '../lib/geometry';

const [file, spec, out] = process.argv.slice(2); // a 4th argument 'all' keeps every opening
if (!file || !spec || !out) throw new Error('usage: widths-dump.ts FILE L/D OUT.bin');
const [layer, datatype] = spec.split('/').map(Number) as [number, number];
const layout = await readLayout(file, undefined);
const set = findLayer(layout, { layer, datatype }, file);
const regions = openRegions(set, layout.dbuUm, { polarity: 'clear', regionDbu: layout.bboxDbu ?? undefined });
const n = regions.pieceCount;
const parent = new Uint32Array(n).map((_, k) => k);
const find = (a: number): number => {
  while (parent[a] !== a) a = parent[a] = parent[parent[a]!]!;
  return a;
};
const seamSum = new Float64Array(n);
for (let s = 0; s < regions.seamA.length; s++) {
  const a = find(regions.seamA[s]!), b = find(regions.seamB[s]!);
  if (a !== b) parent[Math.max(a, b)] = Math.min(a, b);
}
for (let s = 0; s < regions.seamA.length; s++) seamSum[find(regions.seamA[s]!)]! += regions.seamLen[s]!;
const groups = new Map<number, number[]>();
for (let p = 0; p < n; p++) {
  const r = find(p);
  let g = groups.get(r);
  if (!g) groups.set(r, (g = []));
  g.push(p);
}
const c = regions.coords;
// Record: nRings, nPoints, area, perim, bbox(4), ring lengths..., coords...
const rec: number[] = [];
let count = 0;
for (const [root, pieces] of groups) {
  let rings: [number, number][] = [];
  let coords: Float64Array = c;
  let area = 0, perim = 0;
  for (const p of pieces) for (let r = regions.pieceRings[p]!; r < regions.pieceRings[p + 1]!; r++) {
    const s = regions.ringOffsets[r]!, e = regions.ringOffsets[r + 1]!;
    rings.push([s, e]);
    area += ringArea(c, 2 * s, 2 * e);
    perim += ringPerimeter(c, 2 * s, 2 * e);
  }
  if (area <= 0) continue;
  perim -= 2 * seamSum[root]!;
  if (pieces.length > 1) {
    const cl = new ClipperLib.Clipper();
    cl.AddPaths(rings.map(([s, e]) => Array.from({ length: e - s }, (_, k) => ({ X: c[2 * (s + k)]!, Y: c[2 * (s + k) + 1]! }))), ClipperLib.PolyType.ptSubject, true);
    const res: ClipperLib.Paths = [];
    cl.Execute(ClipperLib.ClipType.ctUnion, res, ClipperLib.PolyFillType.pftNonZero, ClipperLib.PolyFillType.pftNonZero);
    const xy: number[] = [];
    rings = [];
    for (const path of res) {
      const s = xy.length / 2;
      for (const pt of path) xy.push(pt.X, pt.Y);
      rings.push([s, xy.length / 2]);
    }
    coords = Float64Array.from(xy);
  }
  const bbox: Box = [Infinity, Infinity, -Infinity, -Infinity];
  for (const [s, e] of rings) for (let k = s; k < e; k++) {
    const x = coords[2 * k]!, y = coords[2 * k + 1]!;
    bbox[0] = Math.min(bbox[0], x); bbox[1] = Math.min(bbox[1], y); bbox[2] = Math.max(bbox[2], x); bbox[3] = Math.max(bbox[3], y);
  }
  const w = featureWidths(coords, rings, bbox, area, perim);
  if (w.step === 0 && process.argv[5] !== 'all') continue;
  rec.push(rings.length, rings.reduce((t, [s, e]) => t + e - s, 0), area, perim, ...bbox);
  for (const [s, e] of rings) rec.push(e - s);
  for (const [s, e] of rings) for (let k = s; k < e; k++) rec.push(coords[2 * k]!, coords[2 * k + 1]!);
  count++;
}
writeFileSync(out, Buffer.from(Float64Array.from(rec).buffer));
console.log(`${count} lattice-path openings of ${groups.size} written to ${out}`);
