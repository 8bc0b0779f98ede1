/**
 * A GDSII file read one tile at a time (TileSource, tile-source.ts), for layouts larger than memory.
 *
 * `openGdsiiTileSource` indexes the file once (gdsii-index.ts: bounded buffer, same checks and errors as the
 * whole-file reader) and computes the header: units, top cell (same rule), flattened counts per layer (same
 * bottom-up totals) and the bbox of everything flattened (cell-bounds.ts: exact without reading geometry when the
 * placements allow it, otherwise by walking the hierarchy once). `readTile` walks the hierarchy from the top cell
 * (gdsii-walk.ts) and collects what it keeps per layer.
 *
 * Limits: one tile may hold at most `maxPolygons` polygons / `maxPoints` vertices (defaults as the whole-file
 * reader's layout limits); beyond that it fails with "too-large" before memory grows further.
 */
import { closeSync, fstatSync, openSync, statSync } from 'node:fs';
import { polygonSetsBbox, type BboxDbu } from './bbox';
import { cellBounds, exactPlacement, growSnapped, type CellBounds } from './cell-bounds';
import { ElementReader } from './element-reader';
import { LayoutReadError } from './errors';
import { indexGdsiiFile, type GdsiiIndex, type IndexOptions, type IndexedCell } from './gdsii-index';
import { HierarchyWalker } from './gdsii-walk';
import { chooseTopCell } from './hierarchy';
import { GrowF64, GrowU32 } from './grow-buffer';
import { layerKey, type CellDef } from './library';
import type { TileSource, TileSourceHeader } from './tile-source';
import type { Placement } from './transform';
import type { FlatLayout, PolygonSet } from './types';

export interface GdsiiTileSourceOptions extends IndexOptions {
  /** Most polygons one tile may return (default 25 000 000). */
  maxPolygons?: number;
  /** Most vertices one tile may return (default 100 000 000). */
  maxPoints?: number;
  /** Refuse layouts that flatten to more polygons / vertices than this (defaults 1e9 / 1e10). */
  maxLayoutPolygons?: number;
  maxLayoutPoints?: number;
  /** Budget of the decoded small-cell cache, in vertices (default 4 000 000 ≈ 64 MB). */
  cachePoints?: number;
}

/** Caps of one readTile call, below the source's own (e.g. the viewer's polygons per view). */
export interface TileCap {
  maxPolygons?: number;
  maxPoints?: number;
}

export interface GdsiiTileSource extends TileSource {
  readonly index: GdsiiIndex;
  /** readTile with tighter caps for this call: more polygons than `cap` fails with "too-large" before they are all read. */
  readTile(box: BboxDbu, layers: { layer: number; datatype: number }[], cap?: TileCap): FlatLayout;
  /** Disk bytes read and elements decoded since opening (index pass excluded). */
  stats(): { bytesRead: number; elementsDecoded: number };
}

export function openGdsiiTileSource(path: string, opts: GdsiiTileSourceOptions = {}): GdsiiTileSource {
  const before = statSync(path, { throwIfNoEntry: false });
  const index = indexGdsiiFile(path, opts);
  return gdsiiTileSourceOfIndex(index, before ? { size: before.size, mtimeMs: before.mtimeMs } : null, opts);
}

/**
 * A tile source over an index already built (e.g. by a caller that checks the cell totals against its own limits
 * first). `before`: the file's size and time when indexing began, so a file changed since is refused.
 */
export function gdsiiTileSourceOfIndex(index: GdsiiIndex, before: { size: number; mtimeMs: number } | null, opts: GdsiiTileSourceOptions = {}): GdsiiTileSource {
  const path = index.path;
  if (index.top >= 0) {
    const tp = index.totals.polygons[index.top] as number;
    const tq = index.totals.points[index.top] as number;
    const maxP = opts.maxLayoutPolygons ?? 1e9;
    const maxQ = opts.maxLayoutPoints ?? 1e10;
    if (tp > maxP || tq > maxQ) {
      const name = (index.lib.cells[index.top] as CellDef).name;
      throw new LayoutReadError('too-large', `cell "${name}" flattens to ${tp} polygons with ${tq} vertices, above the limit of ${maxP} polygons / ${maxQ} vertices`);
    }
  }
  const fd = openSync(path, 'r');
  try {
    const now = fstatSync(fd);
    if (!before || now.size !== before.size || now.mtimeMs !== before.mtimeMs) throw changed(path);
    return new Source(index, fd, opts, now.mtimeMs);
  } catch (err) {
    closeSync(fd);
    throw err;
  }
}

/**
 * A tile source over an index another thread may have built (gdsii-index.ts `shared`), with the top cell `topCell`
 * (default: the indexing rule). Refused, like any open, when the file changed since the index was built.
 */
export function gdsiiTileSourceOfSharedIndex(index: GdsiiIndex, opts: GdsiiTileSourceOptions = {}): GdsiiTileSource {
  const top = chooseTopCell(index.lib, index.totals, opts.topCell);
  return gdsiiTileSourceOfIndex(top === index.top ? index : { ...index, top }, { size: index.fileSize, mtimeMs: index.mtimeMs }, opts);
}

class Source implements GdsiiTileSource {
  readonly header: TileSourceHeader;
  private readonly bounds: CellBounds;
  private readonly reader: ElementReader;
  private readonly walker: HierarchyWalker;
  private closed = false;

  constructor(readonly index: GdsiiIndex, private readonly fd: number, private readonly opts: GdsiiTileSourceOptions, private readonly mtimeMs: number) {
    this.reader = new ElementReader(fd, index.fileSize);
    this.bounds = cellBounds(index);
    this.walker = new HierarchyWalker(index, this.bounds, this.reader, { ...(opts.cachePoints !== undefined ? { cachePoints: opts.cachePoints } : {}), ...(opts.signal ? { signal: opts.signal } : {}) });
    const lib = index.lib;
    const top = index.top;
    const topMap = top >= 0 ? (index.totals.byLayer[top] ?? new Map()) : new Map<number, [number, number]>();
    const layers = [...topMap.entries()].sort((a, b) => a[0] - b[0]).map(([key, [polygons, points]]) => ({ layer: Math.floor(key / 65536), datatype: key % 65536, polygons, points }));
    this.header = {
      format: 'gdsii', libraryName: lib.libraryName, dbuUm: lib.dbuUm, userUnitUm: lib.userUnitUm,
      topCell: top >= 0 ? (lib.cells[top] as CellDef).name : '', cellCount: lib.cells.length,
      layers, bboxDbu: top >= 0 ? this.wholeBbox() : null, warnings: lib.warnings,
    };
  }

  stats() {
    return { bytesRead: this.reader.bytesRead, elementsDecoded: this.reader.elementsDecoded };
  }

  close(): void {
    if (this.closed) return;
    this.closed = true;
    this.walker.clearCache();
    closeSync(this.fd);
  }

  readTile(box: BboxDbu, layers: { layer: number; datatype: number }[], cap: TileCap = {}): FlatLayout {
    if (this.closed) throw new LayoutReadError('io', `tile source for ${this.index.path} is closed`);
    // Offsets are only valid for the bytes that were indexed.
    const st = fstatSync(this.fd);
    if (st.size !== this.index.fileSize || st.mtimeMs !== this.mtimeMs) throw changed(this.index.path);
    const maxPolygons = Math.min(this.opts.maxPolygons ?? 25_000_000, cap.maxPolygons ?? Infinity);
    const maxPoints = Math.min(this.opts.maxPoints ?? 100_000_000, cap.maxPoints ?? Infinity);
    const out = new Map<number, { coords: GrowF64; starts: GrowU32 }>();
    let polygons = 0;
    let points = 0;
    const keys = new Set(layers.map((l) => layerKey(l.layer, l.datatype)));
    this.walker.walk(box, keys, (key, coords, from, to) => {
      polygons++;
      points += to - from;
      if (polygons > maxPolygons || points > maxPoints) {
        throw new LayoutReadError('too-large', `tile [${box.join(', ')}] holds more than ${maxPolygons} polygons or ${maxPoints} vertices; read it in smaller tiles`);
      }
      let o = out.get(key);
      if (!o) out.set(key, (o = { coords: new GrowF64(256), starts: new GrowU32(16) }));
      o.starts.push(o.coords.length >> 1);
      const d = o.coords.reserve(2 * (to - from));
      d.set(coords.subarray(2 * from, 2 * to), o.coords.length);
      o.coords.length += 2 * (to - from);
    });
    const sets: PolygonSet[] = [...out.entries()].sort((a, b) => a[0] - b[0]).map(([key, o]) => {
      const count = o.starts.length;
      const offsets = new Uint32Array(count + 1);
      offsets.set(o.starts.view());
      offsets[count] = o.coords.length >> 1;
      return { layer: Math.floor(key / 65536), datatype: key % 65536, coords: o.coords.data.slice(0, o.coords.length), offsets, count };
    });
    const h = this.header;
    return {
      format: 'gdsii', libraryName: h.libraryName, dbuUm: h.dbuUm, userUnitUm: h.userUnitUm, topCell: h.topCell, cellCount: h.cellCount,
      layers: sets, labels: [], bboxDbu: polygonSetsBbox(sets), ...(h.warnings ? { warnings: h.warnings } : {}),
    };
  }

  /**
   * Bbox of everything flattened: exact subtrees from their boxes; elsewhere, own polygons under a Manhattan
   * placement from their lists' exact boxes (snapping a Manhattan placement is monotone per coordinate, so the
   * extreme vertices give the extremes), and only the rest (non-Manhattan placements) by reading geometry.
   */
  private wholeBbox(): BboxDbu | null {
    const b = Float64Array.of(Infinity, Infinity, -Infinity, -Infinity);
    const { exact, exactOk } = this.bounds;
    const subtree = (c: number, t: Placement) => {
      if (!exactOk[c] || !exactPlacement(t, exact[c] ?? null)) return false;
      const F = exact[c];
      if (F) growSnapped(b, F, t);
      return true;
    };
    const ownLists = (c: number, t: Placement) => {
      if (t.angleDeg % 90 !== 0) return false;
      for (const l of (this.index.cells[c] as IndexedCell).lists) growSnapped(b, l.exact, t);
      return true;
    };
    this.walker.walk(null, null, (_key, coords, from, to) => {
      for (let k = 2 * from; k < 2 * to; k += 2) {
        const x = coords[k] as number, y = coords[k + 1] as number;
        if (x < (b[0] as number)) b[0] = x;
        if (x > (b[2] as number)) b[2] = x;
        if (y < (b[1] as number)) b[1] = y;
        if (y > (b[3] as number)) b[3] = y;
      }
    }, { subtree, ownLists });
    return (b[0] as number) <= (b[2] as number) ? [b[0] as number, b[1] as number, b[2] as number, b[3] as number] : null;
  }
}

const changed = (path: string) => new LayoutReadError('io', `${path} changed while it was being read tile by tile; open it again`);
