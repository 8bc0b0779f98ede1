import { openRegions } from '../lib/geometry';
import { benchLayout } from './geometry-layout';
const set = benchLayout(200);
const r = openRegions(set, 0.001, { regionDbu: [0, 0, 2e6, 2e6] });
const hist = new Map<string, number>();
for (let p = 0; p < r.pieceCount; p++) {
  const r0 = r.pieceRings[p]!, r1 = r.pieceRings[p + 1]!;
  let v = 0, man = true;
  for (let q = r0; q < r1; q++) { const s = r.ringOffsets[q]!, e = r.ringOffsets[q + 1]!; v += e - s;
    for (let k = s; k < e; k++) { const n = k + 1 < e ? k + 1 : s; if (r.coords[2*k] !== r.coords[2*n] && r.coords[2*k+1] !== r.coords[2*n+1]) man = false; } }
  const key = `${man ? 'M' : 'S'} rings=${r1 - r0} v=${v <= 4 ? 4 : v <= 8 ? '5-8' : v <= 12 ? '9-12' : v <= 20 ? '13-20' : v <= 30 ? '21-30' : '>30'}`;
  hist.set(key, (hist.get(key) ?? 0) + 1);
}
console.log([...hist].sort().map(([k, c]) => `${k}: ${c}`).join('\n'));
