/**
 * Checks changed maxWidths against brute force: D on a 500 × 500 grid over the bbox (inside points only), the best
 * point refined by a 64-direction compass search. `node --import tsx bench/widths-brute-max.ts DUMP.bin BEFORE.bin
 * AFTER.bin [every] [down]` (widths-dump / widths-run outputs); checks every `every`-th opening whose maxWidth went up
 * (with `down`: went down; `any`: changed at all).
 */
import { readFileSync } from 'node:fs';
import { readDump } from './widths-run';
import { edgeList, distanceToEdges } from '../lib/geometry/edge-distance';
const load = (f: string) => { const b = readFileSync(f); return new Float64Array(b.buffer, b.byteOffset, b.byteLength / 8); };
const [dumpFile, beforeFile, afterFile, everyArg, dir] = process.argv.slice(2);
const sign = dir === 'down' ? -1 : 1;
if (!dumpFile || !beforeFile || !afterFile) throw new Error('usage: widths-brute-max.ts DUMP.bin BEFORE.bin AFTER.bin [every]');
const every = Number(everyArg ?? 137);
const ops = readDump(dumpFile);
const a = load(beforeFile), b = load(afterFile);
const idx: number[] = [];
for (let k = 0; k < ops.length; k++) if (sign * (b[3*k+1]! - a[3*k+1]!) > (dir === 'any' ? 0 : 1e-6) || (dir === 'any' && b[3*k+1] !== a[3*k+1])) idx.push(k);
idx.sort((p, q) => sign * ((b[3*q+1]! - a[3*q+1]!) - (b[3*p+1]! - a[3*p+1]!)));
// inside test: even-odd over rings
const inside = (c: Float64Array, rings: [number, number][], x: number, y: number) => {
  let w = false;
  for (const [s, e] of rings) for (let k = s; k < e; k++) { const n = k + 1 < e ? k + 1 : s; const yi = c[2*k+1]!, yj = c[2*n+1]!; if ((yi > y) !== (yj > y)) { const xi = c[2*k]! + (y - yi) * (c[2*n]! - c[2*k]!) / (yj - yi); if (x < xi) w = !w; } }
  return w;
};
const tally = { closer: 0, FARTHER: 0, same: 0 };
for (const k of idx.filter((_, i) => i % every === Math.min(3, every - 1))) {
  const f = ops[k]!; const e = edgeList(f.coords, f.rings);
  let best = 0, bx = 0, by = 0;
  const N = 500, sx = (f.bbox[2] - f.bbox[0]) / N, sy = (f.bbox[3] - f.bbox[1]) / N;
  for (let i = 0; i <= N; i++) for (let j = 0; j <= N; j++) { const x = f.bbox[0] + i * sx, y = f.bbox[1] + j * sy; if (!inside(f.coords, f.rings, x, y)) continue; const d = distanceToEdges(e, x, y); if (d > best) { best = d; bx = x; by = y; } }
  // local refine of the grid max (fine compass search)
  let h = Math.max(sx, sy);
  while (h > 1e-7) { let moved = false; for (let q = 0; q < 64 && !moved; q++) { const x = bx + h * Math.cos(q * Math.PI / 32), y = by + h * Math.sin(q * Math.PI / 32); const d = distanceToEdges(e, x, y); if (d > best && h < best) { best = d; bx = x; by = y; moved = true; } } if (!moved) h /= 2; }
  // Every width is 2·D at a point inside, a lower bound of the true maximum: the reference is the larger of the brute
  // force and both answers (a compass search can stall a little below a maximum on a slanted crease).
  const ref = Math.max(2 * best, a[3*k+1]!, b[3*k+1]!);
  const ea = ref - a[3*k+1]!, eb = ref - b[3*k+1]!;
  const verdict = eb < ea ? 'closer' : eb > ea ? 'FARTHER' : 'same';
  tally[verdict]++;
  console.log(`#${k} old max ${a[3*k+1]!.toFixed(6)} new ${b[3*k+1]!.toFixed(6)} brute-force 2·maxD ${(2*best).toFixed(6)} dbu (new − brute ${(b[3*k+1]! - 2*best).toExponential(3)}): ${verdict}`);
}
console.log(`checked ${tally.closer + tally.FARTHER + tally.same}: closer ${tally.closer}, farther ${tally.FARTHER}, same ${tally.same}`);
