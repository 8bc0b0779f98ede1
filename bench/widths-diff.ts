/**
 * `node --import tsx bench/widths-diff.ts BEFORE.bin AFTER.bin` (widths-run.ts outputs): per width, how many openings
 * changed at all, by more than 0.001 dbu (up/down), and the max and 99th-percentile |Δ| in dbu and relative.
 */
import { readFileSync } from 'node:fs';

const load = (f: string) => {
  const b = readFileSync(f);
  return new Float64Array(b.buffer, b.byteOffset, b.byteLength / 8);
};
const [a, b] = process.argv.slice(2).map(load) as [Float64Array, Float64Array];
const n = a.length / 3;
const pct = (xs: number[], p: number) => xs[Math.floor(p * (xs.length - 1))] as number;
for (const [name, off] of [['minWidth', 0], ['maxWidth', 1]] as const) {
  const abs: number[] = [], rel: number[] = [];
  let any = 0, up = 0, down = 0;
  for (let k = 0; k < n; k++) {
    const x = a[3 * k + off] as number, y = b[3 * k + off] as number;
    if (x !== y) any++;
    if (y - x > 1e-3) up++;
    if (x - y > 1e-3) down++;
    abs.push(Math.abs(y - x));
    rel.push(Math.abs(y / x - 1));
  }
  abs.sort((p, q) => p - q);
  rel.sort((p, q) => p - q);
  console.log(`${name}: n=${n} changed=${any} (>0.001 dbu: up ${up}, down ${down}) |Δ| max ${abs[n - 1]!.toFixed(3)} p99 ${pct(abs, 0.99).toFixed(4)} dbu; relative max ${(100 * rel[n - 1]!).toFixed(3)} % p99 ${(100 * pct(rel, 0.99)).toFixed(5)} %`);
}
