import { GdsiiWriter } from './lib/layout/gdsii-writer';
import { GdsiiParser } from './lib/layout/gdsii-parser';
import { flattenLibrary } from './lib/layout/flatten';
const N = 1000;
const w = new GdsiiWriter(); w.beginCell('FLAT');
for (let j = 0; j < N; j++) for (let i = 0; i < N; i++) w.rect(1, 0, i * 10_000, j * 10_000, i * 10_000 + 5000, j * 10_000 + 5000);
const flat = w.endCell().finish();
for (let r = 0; r < 3; r++) {
  let t = performance.now(); const p = new GdsiiParser(); for (let o = 0; o < flat.length; o += 1 << 20) p.push(flat.subarray(o, o + (1 << 20))); const lib = p.finish(); const tp = performance.now() - t;
  t = performance.now(); flattenLibrary(lib); const tf = performance.now() - t;
  console.log('parse', tp.toFixed(0), 'flatten', tf.toFixed(0));
}
