/**
 * End-to-end pipeline benchmark through the HTTP API: a ~1 M-polygon GDSII layout (bench/geometry-layout.ts, the
 * geometry bench's seeded 10 mm × 10 mm etch layer plus a die outline) is uploaded to a started production server,
 * analysed by the worker pool and its results read back. Prints the time of each step: upload (streamed to disk +
 * full read to validate and list layers), queue wait, the worker's stages (from the server-sent events), saving
 * results, and reading results/flags/a map. Needs a production build (built automatically when stale).
 * Run: npm run bench, or npx tsx bench/pipeline.bench.ts
 */
import { pathToFileURL } from 'node:url';
import { DEMO_PASSWORD_DEFAULT } from '../lib/data/demo';
import { signIn } from '../tests/support/http';
import { startTestServer } from '../tests/support/server';
import { BENCH_MODEL, benchLayoutGds } from './geometry-layout';

export default async function pipelineBench(): Promise<void> {
  const t = performance.now();
  const { bytes, polygons } = benchLayoutGds('BENCH1M');
  const genMs = performance.now() - t;
  const server = await startTestServer({ env: { TRENCHANT_JOB_CONCURRENCY: '1' }, readyTimeoutMs: 600_000 });
  try {
    const client = await signIn(server.baseUrl, 'designer@larkspur.example', DEMO_PASSWORD_DEFAULT);
    // Let the seeded demo analysis finish first so the timed job has the pool to itself.
    for (let k = 0; k < 600; k++) {
      const list = (await (await client.get('/api/v1/projects/demo-kestrel/analyses')).json()) as { analyses: { status: string }[] };
      if (list.analyses.every((a) => a.status !== 'queued' && a.status !== 'running')) break;
      await new Promise((r) => setTimeout(r, 250));
    }
    const rows: [string, number][] = [];
    const form = new FormData();
    form.set('name', 'bench 1M');
    form.set('file', new Blob([bytes as Uint8Array<ArrayBuffer>]), 'bench-1m.gds');
    const t0 = performance.now();
    const up = await client.request('/api/v1/projects/demo-kestrel/layouts', { method: 'POST', body: form });
    if (up.status !== 201) throw new Error(`upload failed: ${up.status} ${await up.text()}`);
    const { revision } = (await up.json()) as { revision: { id: string; polygonCount: number } };
    const t1 = performance.now();
    rows.push([`upload ${(bytes.length / 2 ** 20).toFixed(1)} MiB (stream + validate)`, t1 - t0]);

    const created = await client.post('/api/v1/projects/demo-kestrel/analyses', {
      revisionId: revision.id,
      settings: { etchLayers: [{ layer: 1, datatype: 0 }], densityWindows: [{ windowUm: 100, stepUm: 50 }, { windowUm: 700, stepUm: 70 }], limits: { minDensity: 0.05, maxDensity: 0.5, minWidthUm: 1 } },
      model: BENCH_MODEL,
    });
    if (created.status !== 202) throw new Error(`create failed: ${created.status} ${await created.text()}`);
    const id = ((await created.json()) as { analysis: { id: string } }).analysis.id;
    const t2 = performance.now();
    rows.push(['create analysis (validate + queue)', t2 - t1]);

    // Stage times from the event stream: each stage lasts until the next one starts.
    const res = await client.request(`/api/v1/analyses/${id}/events`);
    const firstSeen: [string, number][] = [];
    let end = '';
    const decoder = new TextDecoder();
    let buf = '';
    for await (const chunk of res.body as unknown as AsyncIterable<Uint8Array>) {
      buf += decoder.decode(chunk, { stream: true });
      let cut: number;
      while ((cut = buf.indexOf('\n\n')) >= 0) {
        const block = buf.slice(0, cut);
        buf = buf.slice(cut + 2);
        const data = /\ndata: (.*)/.exec(block)?.[1];
        if (!data) continue;
        const e = JSON.parse(data) as { status: string; stage: string | null; errorMessage: string | null };
        const stage = e.stage ?? e.status;
        if (firstSeen.at(-1)?.[0] !== stage) firstSeen.push([stage, performance.now()]);
        if (block.includes('event: end')) end = `${e.status}${e.errorMessage ? `: ${e.errorMessage}` : ''}`;
      }
    }
    const t3 = performance.now();
    if (!end.startsWith('done')) throw new Error(`analysis ended ${end}`);
    let prev = t2;
    let prevName = 'queued';
    for (const [stage, at] of firstSeen) {
      if (at - prev > 0.5) rows.push([`  ${prevName}`, at - prev]);
      prev = at;
      prevName = stage;
    }
    rows.push(['analysis in the worker + saving (total)', t3 - t2]);

    const r = (await (await client.get(`/api/v1/analyses/${id}/results?limit=1000`)).json()) as {
      summary: { globalDensity: number; features: { count: number }; flags: { total: number; listed: number }; grid: { nx: number; ny: number; pixelUm: number }; timingsMs: Record<string, number> };
    };
    await (await client.get(`/api/v1/analyses/${id}/flags?limit=1000`)).arrayBuffer();
    const map = await (await client.get(`/api/v1/analyses/${id}/maps/risk`)).arrayBuffer();
    const t4 = performance.now();
    rows.push(['read results + 1000 flags + risk map', t4 - t3]);

    console.log(`pipeline bench (HTTP API): ${polygons.toLocaleString('en')} polygons (${revision.polygonCount.toLocaleString('en')} read), ${(bytes.length / 2 ** 20).toFixed(1)} MiB GDSII; generation ${(genMs / 1000).toFixed(1)} s (not counted)`);
    for (const [name, ms] of rows) console.log(`  ${name.padEnd(48)} ${(ms / 1000).toFixed(2).padStart(8)} s`);
    console.log(`  ${'upload → results read (end to end)'.padEnd(48)} ${((t4 - t0) / 1000).toFixed(2).padStart(8)} s`);
    console.log(`  worker stage timings (runAnalysis, ms): ${JSON.stringify(r.summary.timingsMs)}`);
    console.log(`  grid ${r.summary.grid.nx}×${r.summary.grid.ny} at ${r.summary.grid.pixelUm} µm; global density ${r.summary.globalDensity.toFixed(5)}; ${r.summary.features.count.toLocaleString('en')} openings; ${r.summary.flags.total} flags (${r.summary.flags.listed} listed); risk map ${(map.byteLength / 2 ** 20).toFixed(1)} MiB`);
  } finally {
    await server.stop();
  }
}

if (import.meta.url === pathToFileURL(process.argv[1] ?? '').href) await pipelineBench();
