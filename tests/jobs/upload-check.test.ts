/**
 * The upload check (lib/uploads/check-layout.ts): limits on flattened polygons and points are applied before the
 * layout is flattened, with a message naming the limit and the count; good files are described as before.
 * Expected counts are arithmetic on the invented inputs (n × n array of one square = n² polygons, 4 points each).
 */
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { checkLayoutChunks, checkLayoutFile } from '@/lib/uploads/check-layout';
import { arefBombGds, squaresCsv } from './bombs';

const dir = mkdtempSync(path.join(tmpdir(), 'trenchant-upcheck-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

async function* chunks(bytes: Uint8Array, size = 7): AsyncIterable<Uint8Array> {
  for (let p = 0; p < bytes.length; p += size) yield bytes.subarray(p, p + size);
}

const LIMITS = { maxPolygons: 10_000_000, maxPoints: 50_000_000 };

describe('upload check limits', () => {
  it('refuses a 4999 × 4999 AREF bomb from its counts, without flattening it', async () => {
    const bytes = arefBombGds();
    expect(bytes.length).toBeLessThan(400);
    const file = path.join(dir, 'bomb.gds');
    writeFileSync(file, bytes);
    const heapBefore = process.memoryUsage().arrayBuffers;
    const r = await checkLayoutFile(file, LIMITS);
    expect(r.ok).toBe(false);
    if (r.ok || r.code !== 'over-limit') throw new Error('expected over-limit');
    expect(r.limit).toBe('polygons');
    expect(r.count).toBe(4999 * 4999);
    expect(r.limitValue).toBe(10_000_000);
    expect(r.message).toContain('24,990,001');
    expect(r.message).toContain('10,000,000 flattened polygons');
    // Flattening would need 25 M × 4 points × 16 bytes = 1.6 GB of coordinates; nothing near that was allocated.
    expect(process.memoryUsage().arrayBuffers - heapBefore).toBeLessThan(50 * 1024 ** 2);
  });

  it('names the point limit when polygons fit but points do not', async () => {
    const r = await checkLayoutChunks(chunks(arefBombGds(100)), { maxPolygons: 20_000, maxPoints: 39_999 });
    expect(r).toMatchObject({ ok: false, code: 'over-limit', limit: 'points', count: 40_000, limitValue: 39_999 });
  });

  it('accepts a layout exactly at the limits and describes it', async () => {
    const r = await checkLayoutChunks(chunks(arefBombGds(100), 64), { maxPolygons: 10_000, maxPoints: 40_000 });
    expect(r.ok).toBe(true);
    if (!r.ok) return;
    expect(r).toMatchObject({ format: 'gdsii', topCell: 'TOP', libraryName: 'BOMB', polygonCount: 10_000, pointCount: 40_000 });
    expect(r.layers).toEqual([{ layer: 1, datatype: 0, polygons: 10_000, points: 40_000 }]);
    // 100 squares of 1 µm at a 2 µm pitch: extent 0 .. 199 µm = 199 000 dbu.
    expect(r.bboxDbu).toEqual([0, 0, 199_000, 199_000]);
  });

  it('stops reading a CSV at the first vertex past the point limit, naming the line', async () => {
    const csv = new TextEncoder().encode(squaresCsv(2000));
    const r = await checkLayoutChunks(chunks(csv, 4096), { maxPolygons: 1_000_000, maxPoints: 1000 });
    expect(r).toMatchObject({ ok: false, code: 'over-limit', limit: 'points', atLeast: true });
    if (r.ok) return;
    // Vertex 1001 is on line 2 + 1001 = 1003 (magic line, header, then one vertex per line).
    expect(r.message).toContain('line 1003');
    expect(r.message).toContain('more than 1,000 flattened points');
  });

  it('stops reading a CSV at the first polygon past the polygon limit, naming its line', async () => {
    const csv = new TextEncoder().encode(squaresCsv(300));
    const r = await checkLayoutChunks(chunks(csv, 1000), { maxPolygons: 299, maxPoints: 10_000 });
    expect(r).toMatchObject({ ok: false, code: 'over-limit', limit: 'polygons', count: 300, atLeast: true });
    // Polygon 300 starts on line 2 + 299 × 4 + 1 = 1199.
    if (!r.ok) expect(r.message).toContain('refused at CSV line 1199');
    // Exactly at the limit: accepted.
    expect((await checkLayoutChunks(chunks(csv, 1000), { maxPolygons: 300, maxPoints: 10_000 })).ok).toBe(true);
  });

  it('counts CSV polygons as the reader does, whatever the chunk boundaries (comments, blank lines, CRLF, spaces)', async () => {
    const text = [
      '# trenchant-polygons v1',
      '# unit=um dbu=0.001',
      '',
      'layer, datatype, polygon, x, y',
      '1,0,a,0,0', '1,0,a,1,0', '1,0,a,1,1',
      '# a comment between polygons',
      '1,0,b,0,0', '1,0,b,1,0', '', '1,0,b,1,1',
      '2,0,a,0,0', '2,0,a,1,0', '2,0,a,1,1',
      '1,0,c,5,5', '1,0,c,6,5', '1,0,c,6,6', '1,0,c,5,6',
    ].join('\r\n');
    const bytes = new TextEncoder().encode(text);
    const reference = await checkLayoutChunks(chunks(bytes, bytes.length), { maxPolygons: 100, maxPoints: 100 });
    expect(reference).toMatchObject({ ok: true, polygonCount: 4 });
    for (let size = 1; size <= 40; size++) {
      expect(await checkLayoutChunks(chunks(bytes, size), { maxPolygons: 4, maxPoints: 100 }), `chunk ${size}`).toMatchObject({ ok: true, polygonCount: 4 });
      expect(await checkLayoutChunks(chunks(bytes, size), { maxPolygons: 3, maxPoints: 100 }), `chunk ${size}`).toMatchObject({ ok: false, limit: 'polygons', message: expect.stringContaining('CSV line 16)') });
    }
  });

  it('reports unreadable files with the reader message', async () => {
    const bytes = arefBombGds(3);
    const r = await checkLayoutChunks(chunks(bytes.subarray(0, bytes.length - 10)), LIMITS);
    expect(r).toMatchObject({ ok: false, code: 'unreadable' });
    if (!r.ok) expect(r.message).toMatch(/truncated.*byte \d+/);
    expect(await checkLayoutChunks(chunks(new Uint8Array(0)), LIMITS)).toMatchObject({ ok: false, code: 'unreadable', message: expect.stringContaining('empty') });
  });
});

describe('upload check repairs', () => {
  it('an unclosed BOUNDARY is closed and the repair, with its byte offset, travels with the check result', async () => {
    // GDSII XY of a BOUNDARY must repeat its first point last (GDSII Stream Format Manual, release 6.0, XY record).
    const { GdsiiWriter } = await import('@/lib/layout/gdsii-writer');
    const { DataType, Rec } = await import('@/lib/layout/gdsii-records');
    const w = new GdsiiWriter().beginCell('TOP');
    w.rect(1, 0, 0, 0, 1000, 1000);
    w.record(Rec.BOUNDARY, DataType.none);
    w.int16Record(Rec.LAYER, [1]);
    w.int16Record(Rec.DATATYPE, [0]);
    w.int32Record(Rec.XY, [5000, 0, 7000, 0, 7000, 4000, 5000, 4000]); // four points, not closed
    w.record(Rec.ENDEL, DataType.none);
    const bytes = w.endCell().finish();
    const r = await checkLayoutChunks(chunks(bytes), LIMITS);
    if (!r.ok) throw new Error(r.message);
    expect(r.polygonCount).toBe(2);
    expect(r.warnings).toHaveLength(1);
    expect(r.warnings[0]).toMatch(/unclosed|not closed/i);
    expect(r.warnings[0]).toMatch(/byte|offset/i);
    const closed = await checkLayoutChunks(chunks(new GdsiiWriter().beginCell('TOP').rect(1, 0, 0, 0, 1000, 1000).endCell().finish()), LIMITS);
    if (!closed.ok) throw new Error(closed.message);
    expect(closed.warnings).toEqual([]);
  });
});
