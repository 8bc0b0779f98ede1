/**
 * Checks minWidths against brute force (any polygon, not only Manhattan): the exact distance D on a grid of about
 * 800 steps along the longer bbox side (inside points only); every grid point with D ≥ its 8 neighbours refined by a
 * 64-direction compass search to a local maximum c; c is covered when some point b has D(b) − |b − c| ≥ D(c) (the
 * grid's best margin, refined by compass search on that margin); minWidth = 2 × the smallest D(c) not covered
 * (definitions in lib/geometry/widths.ts). Good to the compass search (~1e-6 dbu) where the answer is a plateau or
 * an isolated maximum; a covering disk whose margin the refinement misses by less than that could leave c uncovered.
 * `node --import tsx bench/widths-brute-min.ts DUMP.bin BEFORE.bin AFTER.bin [threshold dbu]` checks every opening
 * whose minWidth changed by more than the threshold (default 0); or `... DUMP.bin BEFORE.bin AFTER.bin list 1,2,3`.
 */
import { readFileSync } from 'node:fs';
import { readDump } from './widths-run';
import { edgeList, distanceToEdges } from '../lib/geometry/edge-distance';

const inside = (c: Float64Array, rings: [number, number][], x: number, y: number) => {
  let w = false;
  for (const [s, e] of rings) for (let k = s; k < e; k++) { const n = k + 1 < e ? k + 1 : s; const yi = c[2*k+1]!, yj = c[2*n+1]!; if ((yi > y) !== (yj > y)) { const xi = c[2*k]! + (y - yi) * (c[2*n]! - c[2*k]!) / (yj - yi); if (x < xi) w = !w; } }
  return w;
};
const DX = Float64Array.from({ length: 64 }, (_, q) => Math.cos((q * Math.PI) / 32));
const DY = Float64Array.from({ length: 64 }, (_, q) => Math.sin((q * Math.PI) / 32));

/** Compass search maximising f from (x, y), first step h; moves shorter than D stay inside. */
function compass(f: (x: number, y: number) => number, e: Float64Array, x: number, y: number, h: number): [number, number, number] {
  let v = f(x, y);
  while (h > 1e-8) {
    let moved = false;
    for (let q = 0; q < 64 && !moved; q++) {
      const px = x + h * DX[q]!, py = y + h * DY[q]!;
      if (!(h < distanceToEdges(e, x, y))) break;
      const w = f(px, py);
      if (w > v) { x = px; y = py; v = w; moved = true; }
    }
    if (!moved) h /= 2;
  }
  return [x, y, v];
}

export function bruteMin(f: { coords: Float64Array; rings: [number, number][]; bbox: [number, number, number, number] }): { min: number; at: [number, number] } {
  const e = edgeList(f.coords, f.rings);
  const bw = f.bbox[2] - f.bbox[0], bh = f.bbox[3] - f.bbox[1];
  const s = Math.max(bw, bh) / 800;
  const nx = Math.floor(bw / s) + 1, ny = Math.floor(bh / s) + 1;
  const D = new Float64Array(nx * ny).fill(-1);
  for (let j = 0; j < ny; j++) for (let i = 0; i < nx; i++) {
    const x = f.bbox[0] + i * s, y = f.bbox[1] + j * s;
    if (inside(f.coords, f.rings, x, y)) D[j * nx + i] = distanceToEdges(e, x, y);
  }
  // Grid points with D ≥ their 8 neighbours, in increasing grid D; each refined to its local maximum (never below its
  // grid D), so once a grid D reaches the best uncovered maximum so far nothing later can beat it.
  const tops: number[] = [];
  for (let j = 1; j + 1 < ny; j++) for (let i = 1; i + 1 < nx; i++) {
    const d = D[j * nx + i]!;
    if (d <= 0) continue;
    let top = true;
    for (let dj = -1; dj <= 1 && top; dj++) for (let di = -1; di <= 1; di++) if (D[(j + dj) * nx + i + di]! > d) { top = false; break; }
    if (top) tops.push(j * nx + i);
  }
  tops.sort((p, q) => D[p]! - D[q]!);
  // Grid points by decreasing D: a covering disk is usually a large one, and the scan stops at the first.
  const byD = Array.from({ length: nx * ny }, (_, q) => q).filter((q) => D[q]! > 0).sort((p, q) => D[q]! - D[p]!);
  let min = Infinity, at: [number, number] = [0, 0];
  for (const t of tops) {
    if (D[t]! >= min) break;
    const ti = t % nx, tj = (t - ti) / nx;
    const [cx, cy, dc] = compass((x, y) => distanceToEdges(e, x, y), e, f.bbox[0] + ti * s, f.bbox[1] + tj * s, s);
    if (dc >= min) continue;
    // Covered: a point b with D(b) > D(c) and |b − c| ≤ D(b). The grid's best margin D(b) − |b − c| first, then
    // refined (only over points with D(b) > D(c)).
    const floor = dc * (1 + 1e-9);
    let bestM = -Infinity, bi = -1;
    for (let o = 0; o < byD.length; o++) {
      const q = byD[o]!, db = D[q]!;
      if (db <= floor) break;
      const qi = q % nx, qj = (q - qi) / nx;
      const m = db - Math.hypot(f.bbox[0] + qi * s - cx, f.bbox[1] + qj * s - cy);
      if (m > bestM) { bestM = m; bi = q; }
      if (m >= 0) break;
    }
    if (bestM >= 0) continue;
    if (bi >= 0) {
      const qi = bi % nx, qj = (bi - qi) / nx;
      const margin = (x: number, y: number) => { const d = distanceToEdges(e, x, y); return d > floor ? d - Math.hypot(x - cx, y - cy) : -Infinity; };
      const [, , m] = compass(margin, e, f.bbox[0] + qi * s, f.bbox[1] + qj * s, s);
      if (m >= -1e-9 * (1 + dc)) continue;
    }
    min = dc;
    at = [cx, cy];
  }
  if (min < Infinity) return { min: 2 * min, at };
  return { min: NaN, at: [0, 0] };
}

if (import.meta.url === `file://${process.argv[1]}`) {
  const load = (f: string) => { const b = readFileSync(f); return new Float64Array(b.buffer, b.byteOffset, b.byteLength / 8); };
  const [dumpFile, beforeFile, afterFile, thrArg, listArg] = process.argv.slice(2);
  if (!dumpFile || !beforeFile || !afterFile) throw new Error('usage: widths-brute-min.ts DUMP.bin BEFORE.bin AFTER.bin [threshold | list K,K]');
  const ops = readDump(dumpFile);
  const a = load(beforeFile), b = load(afterFile);
  const idx: number[] = [];
  if (thrArg === 'list') idx.push(...(listArg ?? '').split(',').map(Number));
  else for (let k = 0; k < ops.length; k++) if (Math.abs(b[3 * k]! - a[3 * k]!) > Number(thrArg ?? 0)) idx.push(k);
  let better = 0, worse = 0, same = 0;
  for (const k of idx) {
    const f = ops[k]!;
    const r = bruteMin(f);
    const ea = Math.abs(a[3 * k]! - r.min), eb = Math.abs(b[3 * k]! - r.min);
    const verdict = eb < ea - 1e-9 ? 'better' : eb > ea + 1e-9 ? 'WORSE' : 'same';
    if (verdict === 'better') better++; else if (verdict === 'WORSE') worse++; else same++;
    console.log(`#${k} before ${a[3 * k]!.toFixed(6)} after ${b[3 * k]!.toFixed(6)} brute-force ${r.min.toFixed(6)} at (${r.at[0].toFixed(1)}, ${r.at[1].toFixed(1)}) dbu: ${verdict} (|after − brute| ${eb.toExponential(2)}, |before − brute| ${ea.toExponential(2)})`);
  }
  console.log(`minWidth checked ${idx.length}: better ${better}, worse ${worse}, same ${same}`);
}
