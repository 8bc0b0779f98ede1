/**
 * The upload check: read a stored upload once, refuse it early when it would flatten beyond the team's limits,
 * and describe it (format, layer table, top cell, extent). Runs inside the upload worker pool (check-worker.ts),
 * never on the server's request thread: a 258-byte GDSII can describe 25 M polygons, and an 87 MB CSV is seconds
 * of parsing.
 *
 * Early refusal: GDSII is parsed (raw records only, bounded by the file size), then the flattened polygon and
 * point counts are computed bottom-up over the cell graph and compared with the limits before any flattened
 * coordinate is allocated. CSV polygons (csv-polygon-counter.ts) and vertices are counted while streaming and
 * reading stops at the first polygon or vertex past its limit.
 */
import { createReadStream } from 'node:fs';
import { LayoutReadError } from '@/lib/layout/errors';
import { CsvPolygonReader, CSV_MAGIC } from '@/lib/layout/csv-reader';
import { flattenLibrary } from '@/lib/layout/flatten';
import { GdsiiParser } from '@/lib/layout/gdsii-parser';
import { bottomUpOrder, cellTotals, checkMissingCells, chooseTopCell } from '@/lib/layout/hierarchy';
import type { FlatLayout } from '@/lib/layout/types';
import { CsvPolygonCounter } from './csv-polygon-counter';

export type UploadLimits = { maxPolygons: number; maxPoints: number };
export type LimitName = 'polygons' | 'points';

export type LayerRow = { layer: number; datatype: number; polygons: number; points: number };

export type UploadCheckResult =
  | {
      ok: true;
      format: 'gdsii' | 'csv';
      layers: LayerRow[];
      topCell: string;
      libraryName: string;
      dbuUm: number;
      bboxDbu: [number, number, number, number] | null;
      polygonCount: number;
      pointCount: number;
      /** What the reader repaired (e.g. an unclosed BOUNDARY), each naming its byte offset; kept with the revision. */
      warnings: string[];
    }
  | { ok: false; code: 'over-limit'; limit: LimitName; limitValue: number; count: number; atLeast: boolean; message: string }
  | { ok: false; code: 'unreadable'; message: string };

const fmt = (n: number) => Math.round(n).toLocaleString('en-US');

export function overLimitMessage(limit: LimitName, limitValue: number, count: number, atLeast: boolean, where = ''): string {
  const what = limit === 'polygons' ? 'flattened polygons' : 'flattened points (vertices)';
  const reached = atLeast ? `more than ${fmt(limitValue)}` : fmt(count);
  return `the layout${where} has ${reached} ${what}, above this team's limit of ${fmt(limitValue)} ${what} (a team admin can change the limit on the team page)`;
}

function overLimit(limit: LimitName, limitValue: number, count: number, atLeast: boolean, where = ''): UploadCheckResult {
  return { ok: false, code: 'over-limit', limit, limitValue, count, atLeast, message: overLimitMessage(limit, limitValue, count, atLeast, where) };
}

function describe(layout: FlatLayout): Extract<UploadCheckResult, { ok: true }> {
  const layers = layout.layers
    .map((s) => ({ layer: s.layer, datatype: s.datatype, polygons: s.count, points: s.offsets[s.count] ?? 0 }))
    .sort((a, b) => a.layer - b.layer || a.datatype - b.datatype);
  return {
    ok: true,
    format: layout.format,
    layers,
    topCell: layout.topCell,
    libraryName: layout.libraryName,
    dbuUm: layout.dbuUm,
    bboxDbu: layout.bboxDbu ? ([...layout.bboxDbu] as [number, number, number, number]) : null,
    polygonCount: layers.reduce((n, l) => n + l.polygons, 0),
    pointCount: layers.reduce((n, l) => n + l.points, 0),
    warnings: (layout.warnings ?? []).map((w) => w.message),
  };
}

function sniff(head: Uint8Array): 'gdsii' | 'csv' | null {
  if (head.length >= 4 && head[0] === 0 && head[1] === 6 && head[2] === 0 && head[3] === 2) return 'gdsii';
  const text = new TextDecoder('latin1').decode(head.subarray(0, 64)).replace(/^\u00EF\u00BB\u00BF/, '').trimStart().toLowerCase();
  return text.startsWith(CSV_MAGIC) ? 'csv' : null;
}

/** Checks the layout bytes from `chunks` against `limits`. Bad files resolve { ok: false, code: 'unreadable' }. */
export async function checkLayoutChunks(chunks: AsyncIterable<Uint8Array>, limits: UploadLimits): Promise<UploadCheckResult> {
  // Set by begin() (a closure): declared by assertion so TypeScript does not narrow them to null for good.
  let gds = null as GdsiiParser | null;
  let csv = null as CsvPolygonReader | null;
  const counter = new CsvPolygonCounter();
  let head = new Uint8Array(0);
  // CSV: count polygons on the bytes first, so a file over the limit stops at the first polygon past it.
  const feedCsv = (bytes: Uint8Array): UploadCheckResult | null => {
    if (counter.push(bytes) > limits.maxPolygons) return overLimit('polygons', limits.maxPolygons, limits.maxPolygons + 1, true, ` (refused at CSV line ${counter.line})`);
    csv!.push(bytes);
    return null;
  };
  const feed = (bytes: Uint8Array): UploadCheckResult | null => {
    if (!gds) return feedCsv(bytes);
    gds.push(bytes);
    return null;
  };
  // The format is known from the first 64 bytes (or the whole file when shorter): start its reader on them.
  const begin = (): UploadCheckResult | null => {
    const kind = sniff(head);
    if (kind === 'gdsii') gds = new GdsiiParser();
    else if (kind === 'csv') csv = new CsvPolygonReader(limits.maxPoints);
    else return { ok: false, code: 'unreadable', message: `not a GDSII stream (no HEADER record at byte 0) nor a "${CSV_MAGIC}" CSV` };
    return feed(head);
  };
  try {
    for await (const input of chunks) {
      const chunk = input.constructor === Uint8Array ? input : new Uint8Array(input.buffer, input.byteOffset, input.byteLength);
      if (!gds && !csv) {
        const joined = new Uint8Array(head.length + chunk.length);
        joined.set(head);
        joined.set(chunk, head.length);
        head = joined;
        if (head.length < 64) continue;
        const refused = begin();
        if (refused) return refused;
        continue;
      }
      const refused = feed(chunk);
      if (refused) return refused;
    }
    if (!gds && !csv) {
      if (head.length === 0) return { ok: false, code: 'unreadable', message: 'empty file (0 bytes)' };
      const refused = begin();
      if (refused) return refused;
    }
    if (csv) {
      if (counter.finish() > limits.maxPolygons) return overLimit('polygons', limits.maxPolygons, limits.maxPolygons + 1, true, ` (refused at CSV line ${counter.line})`);
      const layout = csv.finish();
      const d = describe(layout);
      if (d.polygonCount > limits.maxPolygons) return overLimit('polygons', limits.maxPolygons, d.polygonCount, false);
      return d;
    }
    const lib = gds!.finish();
    checkMissingCells(lib);
    const totals = cellTotals(lib, bottomUpOrder(lib));
    const top = chooseTopCell(lib, totals);
    if (top >= 0) {
      const name = lib.cells[top]?.name ?? '';
      const polys = totals.polygons[top] ?? 0;
      const pts = totals.points[top] ?? 0;
      if (polys > limits.maxPolygons) return overLimit('polygons', limits.maxPolygons, polys, false, ` (top cell "${name}")`);
      if (pts > limits.maxPoints) return overLimit('points', limits.maxPoints, pts, false, ` (top cell "${name}")`);
    }
    return describe(flattenLibrary(lib, { maxPolygons: limits.maxPolygons, maxPoints: limits.maxPoints }));
  } catch (err) {
    if (err instanceof LayoutReadError) {
      if (err.code === 'too-large' && csv) {
        return overLimit('points', limits.maxPoints, limits.maxPoints + 1, true, err.line ? ` (refused at CSV line ${err.line})` : '');
      }
      return { ok: false, code: 'unreadable', message: err.message };
    }
    throw err;
  }
}

/** Streams a file from disk through checkLayoutChunks. */
export async function checkLayoutFile(file: string, limits: UploadLimits): Promise<UploadCheckResult> {
  const stream = createReadStream(file, { highWaterMark: 1 << 20 });
  try {
    return await checkLayoutChunks(stream as AsyncIterable<Uint8Array>, limits);
  } catch (err) {
    const e = err as NodeJS.ErrnoException;
    if (e && typeof e.code === 'string' && !(err instanceof LayoutReadError)) return { ok: false, code: 'unreadable', message: `cannot read the stored upload: ${e.code}` };
    throw err;
  } finally {
    stream.destroy();
  }
}
