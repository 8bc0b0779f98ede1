import { writeFileSync } from 'node:fs';
import { GdsiiWriter } from './lib/layout/gdsii-writer';
import { readLayoutFile } from './lib/layout/read';
const N = 1000;
const w = new GdsiiWriter(); w.beginCell('FLAT');
for (let j = 0; j < N; j++) for (let i = 0; i < N; i++) w.rect(1, 0, i * 10_000, j * 10_000, i * 10_000 + 5000, j * 10_000 + 5000);
writeFileSync('/tmp/flat-bench.gds', w.endCell().finish());
for (let r = 0; r < 3; r++) { const t = performance.now(); await readLayoutFile('/tmp/flat-bench.gds'); console.log('flat file', (performance.now() - t).toFixed(0)); }
