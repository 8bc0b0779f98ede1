/**
 * Liveness under load: 20 concurrent clients on pages and API while upload bombs (a 4999 × 4999 AREF of one
 * square, ≈ 25 M flattened polygons in a few hundred bytes) are refused. Every request must succeed and every bomb
 * must get its 422 naming the polygon limit and the count. The timing figure (p99) lives in bench/load.bench.ts;
 * here only a generous bound that a frozen server (the old behaviour: seconds per bomb on the request thread)
 * would blow through on repeated bombs.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startTestServer, type TestServer } from '../support/server';
import { arefBombGds, squaresCsv } from '../jobs/bombs';
import { leftovers } from './support';
import { runLoad } from './load';

describe('load while an upload bomb is refused', () => {
  let server: TestServer;
  beforeAll(async () => {
    server = await startTestServer({ env: { TRENCHANT_JOB_CONCURRENCY: '1' } });
  });
  afterAll(() => server?.stop());

  it('answers every page and API request and refuses every bomb with 422', async () => {
    const before = leftovers(server.dbFile);
    // Also a 200 000-square polygon CSV (≈ 17 MB): checked in the upload pool while the clients are served.
    const r = await runLoad(server.baseUrl, { clients: 20, durationMs: 6_000, bomb: arefBombGds(), bombs: 3, uploads: [{ name: 'csv200k.csv', bytes: squaresCsv(200_000) }] });
    expect(r.samples.length).toBeGreaterThan(40);
    const bad = r.samples.filter((x) => x.status !== 200);
    expect(bad, JSON.stringify(bad.slice(0, 5))).toEqual([]);
    expect(r.uploads).toMatchObject([{ name: 'csv200k.csv', status: 201 }]);
    expect(r.bombs).toHaveLength(3);
    for (const b of r.bombs) {
      expect(b.status).toBe(422);
      expect(b.message).toContain('24,990,001 flattened polygons');
      expect(b.message).toContain("above this team's limit of 10,000,000");
    }
    // Liveness only (generous): no single request waits anywhere near a frozen server's many seconds.
    expect(Math.max(...r.samples.map((x) => x.ms))).toBeLessThan(15_000);
    const after = leftovers(server.dbFile);
    expect(after).toMatchObject({ revisions: before.revisions + 1, layoutFiles: before.layoutFiles + 1, tmpFiles: 0 });
  });
});
