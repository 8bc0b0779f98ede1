import { readFileSync } from 'node:fs';
import fc from 'fast-check';
import { readLayoutBytes } from './lib/layout/read-bytes';
import { layerSummary } from './lib/layout/union-area';
import { LayoutReadError } from './lib/layout/errors';
import { apply, mutation } from './tests/layout/mutations';
const gds = ['transforms.gds', 'arrays.gds', 'paths.gds', 'paths_round.gds', 'aref_skewed.gds', 'dbu_10nm_mm.gds'].map((f) => new Uint8Array(readFileSync('tests/fixtures/gds/' + f)));
let n = 0, slow = 0; const t0 = performance.now();
await fc.assert(fc.asyncProperty(fc.integer({ min: 0, max: gds.length - 1 }), fc.array(mutation, { minLength: 1, maxLength: 3 }), async (i, muts) => {
  const b = apply(gds[i]!, muts); (await import('node:fs')).writeFileSync('/tmp/fuzz-case.json', JSON.stringify([i, muts]));
  const t = performance.now(); let phase = 'read';
  try { const l = await readLayoutBytes(b, { maxPolygons: 200_000, maxPoints: 2_000_000, maxLabels: 1000 }); phase = 'union ' + l.layers.map(s => s.count).join('/'); if (l.layers.every((s) => s.count <= 500)) layerSummary(l); } catch (e) { if (!(e instanceof LayoutReadError)) { console.log('NON-LRE', e, i, JSON.stringify(muts)); } }
  const dt = performance.now() - t; n++;
  if (dt > 200) { slow++; if (slow < 15) console.log('slow', dt.toFixed(0), phase, i, JSON.stringify(muts)); }
}), { seed: 20261202, numRuns: 4000 });
console.log('runs', n, 'slow', slow, 'total ms', performance.now() - t0);
