/**
 * By hand: what the GDSII index costs a tile worker with 1 and 2 threads. The parent plans the tiles (its own index,
 * not measured); a child process — the tile worker — starts a pool of shared tile threads (tile-pool.ts, as
 * `npm run worker` does), runs one core tile per thread at once (every thread needs the index: cold), then the same
 * tiles again (warm), and prints one JSON line: cold and warm wall time (their difference ≈ the index's share of
 * the wall time), the whole process's CPU time, its peak RSS and its RSS at the end.
 * Usage: nice -n 10 node --import tsx bench/tile-index-share.ts FILE.gds [threads,… default 1,2]
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { loadavg, tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';

const [file, counts = '1,2', child] = process.argv.slice(2);
if (!file) throw new Error('usage: bench/tile-index-share.ts FILE.gds [1,2]');

if (child) {
  const { sharedTileThreads } = await import('../lib/pipeline/tiled/tile-pool');
  const plan = JSON.parse(readFileSync(child, 'utf8'));
  const threads = Number(counts);
  const pool = sharedTileThreads(threads);
  if (!pool) throw new Error('no tile thread could start');
  const spec = { kind: 'file' as const, path: file };
  const jobs = Array.from({ length: threads }, (_, k) => ({ kind: 'core' as const, tile: k, marginDbu: plan.marginDbu }));
  const cpu0 = process.cpuUsage();
  let t = performance.now();
  await Promise.all(jobs.map((j) => pool.run(j, spec, plan)));
  const coldMs = performance.now() - t;
  const rssCold = process.memoryUsage().rss;
  t = performance.now();
  await Promise.all(jobs.map((j) => pool.run(j, spec, plan)));
  const warmMs = performance.now() - t;
  const cpu = process.cpuUsage(cpu0);
  const MB = (b: number) => Math.round(b / 1e5) / 10;
  console.log(JSON.stringify({
    threads, tiles: jobs.length, coldMs: Math.round(coldMs), warmMs: Math.round(warmMs), cpuS: Math.round((cpu.user + cpu.system) / 1e5) / 10,
    peakRssMB: MB(process.resourceUsage().maxRSS * 1024), rssAfterColdMB: MB(rssCold), rssEndMB: MB(process.memoryUsage().rss),
    threadPeaksMB: pool.peakBytes().map(MB),
    ...('indexPasses' in pool ? { indexPassesPerThread: (pool as { indexPasses(): number[] }).indexPasses() } : {}),
  }));
  await pool.close();
} else {
  const { openGdsiiTileSource } = await import('../lib/layout/gdsii-tile-source');
  const { planTiles } = await import('../lib/pipeline/tiled/plan');
  const { analysisSettingsSchema } = await import('../lib/pipeline/settings');
  const src = openGdsiiTileSource(file);
  const layer = src.header.layers[0]!;
  const settings = analysisSettingsSchema.parse({ etchLayers: [{ layer: layer.layer, datatype: layer.datatype }] });
  const w = src.header.bboxDbu ? (src.header.bboxDbu[2] - src.header.bboxDbu[0]) * src.header.dbuUm : 1000;
  const plan = planTiles(src.header, settings, { tileUm: w / 8 });
  src.close();
  const dir = mkdtempSync(join(tmpdir(), 'trenchant-bench-tis-'));
  const planFile = join(dir, 'plan.json');
  writeFileSync(planFile, JSON.stringify(plan));
  try {
    for (const n of counts.split(',').map(Number)) {
      const load = loadavg()[0]!.toFixed(2);
      const r = spawnSync(process.execPath, ['--import', 'tsx', fileURLToPath(import.meta.url), file, String(n), planFile], { encoding: 'utf8' });
      if (r.status !== 0) throw new Error(r.stderr);
      console.log(r.stdout.trim().replace(/}$/, `, loadBefore: ${load}}`).replace('loadBefore', '"loadBefore"'));
    }
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}
