/**
 * Loopback load benchmark (by hand: `npm run bench -- load`): 20 concurrent clients on pages and API of a started
 * production server for 15 s while upload bombs (4999 × 4999 AREF, ≈ 25 M polygons in a few hundred bytes) are
 * sent and refused. Prints p50 / p99 / max per route and for the bombs. Goal (issue 15): p99 under 1 s.
 */
import { writeFileSync } from 'node:fs';
import { loadavg } from 'node:os';
import path from 'node:path';
import { pathToFileURL } from 'node:url';
import { arefBombGds, squaresCsv } from '../tests/jobs/bombs';
import { LOAD_PATHS, percentile, runLoad } from '../tests/pipeline-server/load';
import { startTestServer } from '../tests/support/server';

export default async function loadBench(): Promise<void> {
  const server = await startTestServer({ env: { TRENCHANT_JOB_CONCURRENCY: '1' }, readyTimeoutMs: 600_000 });
  try {
    // Let the seeded demo analysis finish so the load does not share the CPU with it.
    await new Promise((r) => setTimeout(r, 8000));
    console.log(`load average ${loadavg().map((v) => v.toFixed(2)).join(' ')}`);
    // Plus one ~85 MB polygon CSV (1 M squares, 4 M vertex lines), a legitimate large upload checked alongside.
    // BENCH_LOAD_CSV=0 leaves it out (bombs only). Sent by curl, so the big body does not stall the timing process.
    const csv = process.env.BENCH_LOAD_CSV === '0' ? '' : squaresCsv(1_000_000);
    const csvFile = path.join(server.dataDir, 'bench-big.csv');
    if (csv) writeFileSync(csvFile, csv);
    const r = await runLoad(server.baseUrl, { clients: 20, durationMs: 20_000, bomb: arefBombGds(), bombs: 10, curlUploads: csv ? [{ name: 'big.csv', file: csvFile }] : [] });
    const all = r.samples.map((x) => x.ms);
    const fmt = (v: number) => `${v.toFixed(0)} ms`.padStart(8);
    console.log(`20 clients, ${(r.wallMs / 1000).toFixed(1)} s: ${r.samples.length} requests (${(r.samples.length / (r.wallMs / 1000)).toFixed(0)}/s), ${r.samples.filter((x) => x.status !== 200).length} not 200`);
    console.log(`  ${'route'.padEnd(44)}     p50      p99      max`);
    for (const p of LOAD_PATHS) {
      const v = r.samples.filter((x) => x.path === p).map((x) => x.ms);
      console.log(`  ${p.padEnd(44)} ${fmt(percentile(v, 50))} ${fmt(percentile(v, 99))} ${fmt(Math.max(...v))}`);
    }
    console.log(`  ${'all'.padEnd(44)} ${fmt(percentile(all, 50))} ${fmt(percentile(all, 99))} ${fmt(Math.max(...all))}`);
    const b = r.bombs.map((x) => x.ms);
    for (const u of r.uploads) console.log(`  upload ${u.name} (${(csv.length / 2 ** 20).toFixed(0)} MiB): ${u.status} in ${(u.ms / 1000).toFixed(1)} s`);
    console.log(`  bombs: ${r.bombs.length} sent, statuses ${[...new Set(r.bombs.map((x) => x.status))].join(',')}, refusal p50 ${fmt(percentile(b, 50))}, max ${fmt(Math.max(...b))}`);
  } finally {
    await server.stop();
  }
}

if (import.meta.url === pathToFileURL(process.argv[1] ?? '').href) await loadBench();
