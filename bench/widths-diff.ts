/** `node --import tsx bench/widths-diff.ts BEFORE.bin AFTER.bin`: count, max and 99th percentile |Δ| (dbu) of min/max widths. */
import { readFileSync } from 'node:fs';

const load = (f: string) => {
  const b = readFileSync(f);
  return new Float64Array(b.buffer, b.byteOffset, b.byteLength / 8);
};
const [a, b] = process.argv.slice(2).map(load) as [Float64Array, Float64Array];
const n = a.length / 3;
for (const [name, off] of [['minWidth', 0], ['maxWidth', 1]] as const) {
  const d: number[] = [];
  let up = 0, down = 0;
  for (let k = 0; k < n; k++) {
    const x = a[3 * k + off]!, y = b[3 * k + off]!;
    const e = Math.abs(y - x);
    d.push(e);
    if (e > 1e-6 * Math.max(1, Math.abs(x))) y > x ? up++ : down++;
  }
  d.sort((p, q) => p - q);
  const rel: number[] = [];
  for (let k = 0; k < n; k++) rel.push(Math.abs(b[3 * k + off]! / a[3 * k + off]! - 1));
  rel.sort((p, q) => p - q);
  console.log(`${name}: n=${n} changed=${up + down} (up ${up}, down ${down}) max|Δ|=${d[n - 1]!.toFixed(3)} dbu p99|Δ|=${d[Math.floor(0.99 * (n - 1))]!.toFixed(3)} dbu; rel max ${(100 * rel[n - 1]!).toFixed(3)} % p99 ${(100 * rel[Math.floor(0.99 * (n - 1))]!).toFixed(4)} %`);
}
