/**
 * The canvas viewer's polygons-in-view answers for a layout above the whole-read size come from the on-disk GDSII
 * index, one window at a time (lib/viewer/layout-windows.ts). They must hold the same polygons (same layer, same
 * float32 coordinates) as the R-tree over the whole flattened layout (polygon-index.ts) for any box, and a box with
 * more than the asked maximum must give no polygons (the viewer then draws the coverage raster) without reading
 * them all.
 */
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { openGdsiiTileSource } from '@/lib/layout/gdsii-tile-source';
import { readLayoutFile } from '@/lib/layout/read';
import { openWindowReader, queryTileSource } from '@/lib/viewer/layout-windows';
import { buildPolygonIndex, queryPolygons } from '@/lib/viewer/polygon-index';
import { queryPolygonsOffThread } from '@/lib/viewer/index-host';
import { flatDie, hierarchicalDie, rng } from '../layout/tile-fixtures';
import { polygonTexts } from './support';

const dir = mkdtempSync(join(tmpdir(), 'trenchant-vwin-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
writeFileSync(join(dir, 'hier.gds'), hierarchicalDie());
writeFileSync(join(dir, 'flat.gds'), flatDie(20_000));

describe('viewer windows from the on-disk index = the whole-layout R-tree', () => {
  for (const [name, at] of [['hier.gds', dir], ['flat.gds', dir], ['mems-die.gds', 'samples'], ['tsv-test-chip.gds', 'samples']] as const) {
    it(name, async () => {
      const file = join(at, name);
      const layout = await readLayoutFile(file);
      const ix = buildPolygonIndex(layout);
      const src = openGdsiiTileSource(file);
      try {
        const [bx0, by0, bx1, by1] = ix.bboxUm;
        const r = rng(3);
        let nonEmpty = 0;
        for (let k = 0; k < 25; k++) {
          const w = (bx1 - bx0) * (0.02 + 0.3 * r()), h = (by1 - by0) * (0.02 + 0.3 * r());
          const x = bx0 - 5 + r() * (bx1 - bx0), y = by0 - 5 + r() * (by1 - by0);
          const box: [number, number, number, number] = [x, y, x + w, y + h];
          const a = queryPolygons(ix, box, 200_000);
          const b = queryTileSource(src, box, 200_000);
          expect(b.layers).toEqual(a.layers);
          expect([b.originX, b.originY]).toEqual([a.originX, a.originY]);
          expect(b.total).toBe(a.total);
          expect(polygonTexts(b)).toEqual(polygonTexts(a));
          if (a.total > 0) nonEmpty++;
        }
        expect(nonEmpty).toBeGreaterThan(5);
      } finally {
        src.close();
      }
    });
  }

  it('a box over the maximum returns no polygons and stops reading soon after the maximum', async () => {
    const file = join(dir, 'flat.gds');
    const src = openGdsiiTileSource(file);
    try {
      const all = queryTileSource(src, [-10, -10, 2000, 2000], 100_000);
      expect(all.total).toBe(20_001);
      const before = src.stats().elementsDecoded;
      const capped = queryTileSource(src, [-10, -10, 2000, 2000], 500);
      expect(capped.polyLayer.length).toBe(0);
      expect(capped.total).toBeGreaterThan(500);
      expect(src.stats().elementsDecoded - before).toBeLessThan(20_000); // decoding stopped in a batch, not after the whole die
    } finally {
      src.close();
    }
  });

  it('openWindowReader picks the index above the whole-read size, and the off-thread host answers the same', async () => {
    const file = join(dir, 'hier.gds');
    const big = await openWindowReader(file, null, 0);
    const small = await openWindowReader(file, null, 1e12);
    expect([big.via, small.via]).toEqual(['index', 'whole']);
    const box: [number, number, number, number] = [0, 0, 250, 200];
    expect(polygonTexts(big.query(box, 50_000))).toEqual(polygonTexts(small.query(box, 50_000)));
    const off = await queryPolygonsOffThread({ revisionId: 'large-hier', path: file, topCell: null, wholeReadBytes: 0, box, max: 50_000 });
    expect(polygonTexts(off.polygons)).toEqual(polygonTexts(small.query(box, 50_000)));
    big.close();
  });
});
