/**
 * Measures every opening of a widths-dump.ts file with `featureWidths` (one thread, one shape cache as in the
 * pipeline), prints the time, and writes minWidth, maxWidth, step per opening for widths-diff.ts.
 * `node --import tsx bench/widths-run.ts IN.bin OUT.bin [uniform]` (`uniform`: the uniform lattices only, the old path)
 */
import { readFileSync, writeFileSync } from 'node:fs';
import { loadavg } from 'node:os';
import { featureWidths, type Box, type WidthCache } from '../lib/geometry';

export interface DumpedOpening { coords: Float64Array; rings: [number, number][]; bbox: Box; area: number; perim: number }

export function readDump(file: string): DumpedOpening[] {
  const b = readFileSync(file);
  const a = new Float64Array(b.buffer, b.byteOffset, b.byteLength / 8);
  const out: DumpedOpening[] = [];
  for (let o = 0; o < a.length; ) {
    const nr = a[o]!, np = a[o + 1]!, area = a[o + 2]!, perim = a[o + 3]!;
    const bbox: Box = [a[o + 4]!, a[o + 5]!, a[o + 6]!, a[o + 7]!];
    o += 8;
    const rings: [number, number][] = [];
    let s = 0;
    for (let r = 0; r < nr; r++) {
      rings.push([s, s + a[o + r]!]);
      s += a[o + r]!;
    }
    o += nr;
    out.push({ coords: a.slice(o, o + 2 * np), rings, bbox, area, perim });
    o += 2 * np;
  }
  return out;
}

if (import.meta.url === `file://${process.argv[1]}`) {
  const [inp, out] = process.argv.slice(2);
  if (!inp || !out) throw new Error('usage: widths-run.ts IN.bin OUT.bin');
  const ops = readDump(inp);
  const res = new Float64Array(3 * ops.length);
  const opts = process.argv[4] === 'uniform' ? { uniformLattice: true } : {};
  const cache: WidthCache = new Map();
  const t0 = performance.now();
  const c0 = process.cpuUsage();
  ops.forEach((f, k) => {
    const w = featureWidths(f.coords, f.rings, f.bbox, f.area, f.perim, opts, cache);
    res[3 * k] = w.minWidth;
    res[3 * k + 1] = w.maxWidth;
    res[3 * k + 2] = w.step;
  });
  const ms = performance.now() - t0;
  const cpu = process.cpuUsage(c0);
  writeFileSync(out, Buffer.from(res.buffer));
  console.log(`${ops.length} openings in ${ms.toFixed(0)} ms wall, ${((cpu.user + cpu.system) / 1000).toFixed(0)} ms CPU (${((1000 * ms) / ops.length).toFixed(1)} µs each); load ${loadavg()[0]!.toFixed(2)}`);
}
