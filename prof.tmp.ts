import { GdsiiWriter } from './lib/layout/gdsii-writer';
import { readLayoutBytes } from './lib/layout/read-bytes';
const N = 1000;
const w = new GdsiiWriter(); w.beginCell('FLAT');
for (let j = 0; j < N; j++) for (let i = 0; i < N; i++) w.rect(1, 0, i * 10_000, j * 10_000, i * 10_000 + 5000, j * 10_000 + 5000);
const flat = w.endCell().finish();
const h = new GdsiiWriter(); h.beginCell('DIE').aref('VIA', N, N, [0,0], [N*10000,0], [0,N*10000]).endCell(); h.beginCell('VIA').rect(1,0,0,0,5000,5000).endCell();
const hier = h.finish();
for (let r = 0; r < 3; r++) {
  let t = performance.now(); await readLayoutBytes(flat); const tf = performance.now() - t;
  t = performance.now(); await readLayoutBytes(hier); const th = performance.now() - t;
  console.log('flat', tf.toFixed(0), 'hier', th.toFixed(0));
}
