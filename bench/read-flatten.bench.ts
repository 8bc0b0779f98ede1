/**
 * Read + flatten (+ union) throughput of the layout reader on generated layouts (never committed, written to the
 * OS temp folder): a hierarchical die with ~1M flattened polygons and a flat file with the same polygons, plus a
 * gdspy + numpy run of the same job (bench/gdspy_read.py) for the ratio.
 */
import { execFileSync } from 'node:child_process';
import { mkdtempSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { GdsiiWriter } from '../lib/layout/gdsii-writer';
import { readLayoutFile } from '../lib/layout/read';
import { layerSummary } from '../lib/geometry/union-area';

const N = 1000; // N × N instances

function hierarchical(): Uint8Array {
  // A die of 4 blocks; each block holds a 500×500 AREF of a via cell (1 square) → 1M polygons on layer 1.
  const w = new GdsiiWriter({ libraryName: 'BENCH_H' });
  w.beginCell('DIE');
  for (const [bx, by] of [[0, 0], [6_000_000, 0], [0, 6_000_000], [6_000_000, 6_000_000]] as const) w.sref('BLOCK', bx, by);
  w.endCell();
  w.beginCell('BLOCK').aref('VIA', N / 2, N / 2, [0, 0], [(N / 2) * 10_000, 0], [0, (N / 2) * 10_000]).endCell();
  w.beginCell('VIA').rect(1, 0, 0, 0, 5000, 5000).endCell();
  return w.finish();
}

function flat(): Uint8Array {
  const w = new GdsiiWriter({ libraryName: 'BENCH_F' });
  w.beginCell('FLAT');
  for (let j = 0; j < N; j++) for (let i = 0; i < N; i++) w.rect(1, 0, i * 10_000, j * 10_000, i * 10_000 + 5000, j * 10_000 + 5000);
  return w.endCell().finish();
}

async function measure(label: string, file: string, withUnion: boolean): Promise<number> {
  const mb = statSync(file).size / 1e6;
  const t0 = performance.now();
  const layout = await readLayoutFile(file);
  const t1 = performance.now();
  const polys = layout.layers.reduce((n, s) => n + s.count, 0);
  const s = (t1 - t0) / 1000;
  console.log(`${label}: ${mb.toFixed(1)} MB, ${polys} polygons: read+flatten ${s.toFixed(3)} s = ${(mb / s).toFixed(0)} MB/s, ${(polys / s / 1e6).toFixed(2)} M polygons/s`);
  if (withUnion) {
    const rows = layerSummary(layout);
    const u = (performance.now() - t0) / 1000;
    console.log(`${label}: read+flatten+union ${u.toFixed(2)} s = ${(polys / u / 1e6).toFixed(2)} M polygons/s (area ${rows[0]?.areaUm2} µm²)`);
  }
  return s;
}

export default async function (): Promise<void> {
  const dir = mkdtempSync(join(tmpdir(), 'trenchant-bench-'));
  try {
    const h = join(dir, 'hier.gds');
    const f = join(dir, 'flat.gds');
    writeFileSync(h, hierarchical());
    writeFileSync(f, flat());
    await measure('warm-up', h, false);
    const th = await measure('hierarchical', h, true);
    const tf = await measure('flat', f, true);
    console.log(`peak RSS ${(process.resourceUsage().maxRSS / 1024).toFixed(0)} MB, heap now ${(process.memoryUsage().heapUsed / 1e6).toFixed(0)} MB`);
    for (const [label, file, ours] of [['hierarchical', h, th], ['flat', f, tf]] as const) {
      try {
        const out = execFileSync('/usr/bin/python3', [join(import.meta.dirname, 'gdspy_read.py'), file], { encoding: 'utf8', timeout: 600_000 });
        const g = JSON.parse(out) as { total_s: number; polygons: number };
        console.log(`gdspy+numpy ${label}: ${g.total_s.toFixed(2)} s for ${g.polygons} polygons → Trenchant is ${(g.total_s / ours).toFixed(1)}× faster`);
      } catch (err) {
        console.log(`gdspy comparison for ${label} not run: ${(err as Error).message.split('\n')[0]}`);
      }
    }
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}
