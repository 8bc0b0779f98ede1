/**
 * The upload check for a GDSII file too large to read whole (lib/layout/whole-read-limit.ts): one indexing pass
 * with a bounded buffer (lib/layout/gdsii-index.ts — the same parser and checks as the whole-file reader, so a bad
 * file fails with the same message and byte offset), the team's limits applied to the flattened totals of the top
 * cell, then the description the upload page shows (layer table, top cell, extent, counts) from the index, never
 * from flattened geometry. Memory: the index (about 20 bytes per polygon element), not the flattened layout.
 */
import { statSync } from 'node:fs';
import { LayoutReadError } from '@/lib/layout/errors';
import { indexGdsiiFile } from '@/lib/layout/gdsii-index';
import { gdsiiTileSourceOfIndex } from '@/lib/layout/gdsii-tile-source';
import { readsThroughIndex } from '@/lib/layout/whole-read-limit';
import { checkLayoutFile, overLimitMessage, type LimitName, type UploadCheckResult, type UploadLimits } from './check-layout';

function overLimit(limit: LimitName, limitValue: number, count: number, where: string): UploadCheckResult {
  return { ok: false, code: 'over-limit', limit, limitValue, count, atLeast: false, message: overLimitMessage(limit, limitValue, count, false, where) };
}

/** Checks and describes the GDSII file at `file` from its on-disk index. Bad files resolve { ok: false }. */
export function checkGdsiiByIndex(file: string, limits: UploadLimits, signal?: AbortSignal): UploadCheckResult {
  try {
    const st = statSync(file);
    const index = indexGdsiiFile(file, signal ? { signal } : {});
    const top = index.top;
    if (top >= 0) {
      const name = index.lib.cells[top]?.name ?? '';
      const polys = index.totals.polygons[top] ?? 0;
      const pts = index.totals.points[top] ?? 0;
      if (polys > limits.maxPolygons) return overLimit('polygons', limits.maxPolygons, polys, ` (top cell "${name}")`);
      if (pts > limits.maxPoints) return overLimit('points', limits.maxPoints, pts, ` (top cell "${name}")`);
    }
    // The header of a tile source is the whole-file read's description (same layer counts, top cell and extent).
    const source = gdsiiTileSourceOfIndex(index, { size: st.size, mtimeMs: st.mtimeMs }, { maxLayoutPolygons: Infinity, maxLayoutPoints: Infinity, ...(signal ? { signal } : {}) });
    try {
      const h = source.header;
      const layers = h.layers.map((l) => ({ layer: l.layer, datatype: l.datatype, polygons: l.polygons, points: l.points }));
      return {
        ok: true,
        format: 'gdsii',
        layers,
        topCell: h.topCell,
        libraryName: h.libraryName,
        dbuUm: h.dbuUm,
        bboxDbu: h.bboxDbu ? [h.bboxDbu[0], h.bboxDbu[1], h.bboxDbu[2], h.bboxDbu[3]] : null,
        polygonCount: layers.reduce((n, l) => n + l.polygons, 0),
        pointCount: layers.reduce((n, l) => n + l.points, 0),
        warnings: (h.warnings ?? []).map((w) => w.message),
      };
    } finally {
      source.close();
    }
  } catch (err) {
    if (err instanceof LayoutReadError) return { ok: false, code: 'unreadable', message: err.message };
    const e = err as NodeJS.ErrnoException;
    if (e && typeof e.code === 'string') return { ok: false, code: 'unreadable', message: `cannot read the stored upload: ${e.code}` };
    throw err;
  }
}

/**
 * The upload check of a stored file: GDSII above `wholeReadBytes` through the index, anything else read whole
 * (check-layout.ts). Also says which path ran, for the revision record and the tests.
 */
export async function checkStoredLayout(file: string, limits: UploadLimits, wholeReadBytes: number): Promise<UploadCheckResult & { via: 'whole' | 'index' }> {
  if (readsThroughIndex(file, wholeReadBytes)) return { ...checkGdsiiByIndex(file, limits), via: 'index' };
  return { ...(await checkLayoutFile(file, limits)), via: 'whole' };
}
