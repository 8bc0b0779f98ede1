/**
 * Reader for Trenchant's own polygon CSV ("trenchant-polygons v1"). Format:
 *
 *   # trenchant-polygons v1                 ← first line, identifies the format
 *   # unit=um dbu=0.001 name=demo-die       ← optional settings lines (before the header)
 *   layer,datatype,polygon,x,y              ← header, exactly these columns
 *   1,0,1,0,0                               ← one vertex per row
 *   1,0,1,10,0
 *   1,0,1,10,5
 *
 * - unit: um (default), nm or dbu — the unit of x and y. dbu: database unit in µm (default 0.001); coordinates
 *   must lie on the dbu grid (within 1e-6 dbu) and are stored as integer dbu.
 * - Consecutive rows with the same (layer, datatype, polygon) form one polygon (ring, closed implicitly; a repeated
 *   closing vertex is dropped). A polygon needs at least 3 distinct vertices, and its rows must be contiguous.
 * - Each polygon is filled on its own (like a GDSII boundary); draw a hole as one ring with a zero-width cut
 *   (keyhole), as GDSII writers do.
 * - Lines starting with # after the header are comments; blank lines are ignored.
 * Parsed incrementally with csv-parse (complete lines are handed over in batches), so large files stream.
 */
import { parse } from 'csv-parse/sync';
import { LayoutReadError } from './errors';
import { appendRing, newCell, shapesFor, type CellDef } from './library';
import { layoutBbox } from './flatten';
import type { FlatLayout } from './types';

export const CSV_MAGIC = '# trenchant-polygons v1';

interface Pending {
  layer: number;
  datatype: number;
  polygon: string;
  line: number;
  xy: number[];
}

export class CsvPolygonReader {
  private decoder = new TextDecoder('utf-8', { fatal: false });
  private text = '';
  private line = 0; // lines consumed so far
  private headerSeen = false;
  private magicSeen = false;
  private unitScale = 1; // coordinate unit in µm
  private dbuUm = 0.001;
  private userUnitUm = 1;
  private name = '';
  private cell: CellDef = newCell('');
  private cur: Pending | null = null;
  private closed = new Set<string>();
  private points = 0;

  constructor(private readonly maxPoints = 100_000_000) {}

  push(chunk: Uint8Array): void {
    this.text += this.decoder.decode(chunk, { stream: true });
    const cut = this.text.lastIndexOf('\n');
    if (cut < 0) {
      if (this.text.length > 1 << 20) throw new LayoutReadError('csv', `CSV line ${this.line + 1} is longer than 1 MiB`, { line: this.line + 1 });
      return;
    }
    const batch = this.text.slice(0, cut + 1);
    this.text = this.text.slice(cut + 1);
    this.consume(batch);
  }

  finish(): FlatLayout {
    this.text += this.decoder.decode();
    if (this.text.length > 0) this.consume(this.text.endsWith('\n') ? this.text : `${this.text}\n`);
    this.text = '';
    if (!this.magicSeen) throw new LayoutReadError('empty', 'empty file (no content)', { line: 1 });
    if (!this.headerSeen) throw new LayoutReadError('csv', `CSV has no header line "layer,datatype,polygon,x,y" (line ${this.line})`, { line: this.line });
    this.flushPolygon();
    const layers = this.cell.shapes
      .slice()
      .sort((a, b) => a.key - b.key)
      .map((s) => {
        const offsets = new Uint32Array(s.starts.length + 1);
        offsets.set(s.starts.view());
        offsets[s.starts.length] = s.coords.length / 2;
        return { layer: s.layer, datatype: s.datatype, coords: s.coords.data.slice(0, s.coords.length), offsets, count: s.starts.length };
      });
    return { format: 'csv', libraryName: this.name, dbuUm: this.dbuUm, userUnitUm: this.userUnitUm, topCell: '', cellCount: 0, layers, labels: [], bboxDbu: layoutBbox(layers) };
  }

  /** Preamble lines (magic, settings, header) are read here; data rows go to csv-parse in one batch. */
  private consume(batch: string): void {
    let start = 0;
    while (!this.headerSeen && start < batch.length) {
      const nl = batch.indexOf('\n', start);
      const raw = batch.slice(start, nl);
      start = nl + 1;
      this.line++;
      const text = raw.replace(/^\uFEFF/, '').trim();
      if (!this.magicSeen) {
        if (text === '') continue;
        if (!text.toLowerCase().startsWith(CSV_MAGIC)) {
          throw new LayoutReadError('csv', `CSV line ${this.line}: first line must be "${CSV_MAGIC}"`, { line: this.line });
        }
        this.magicSeen = true;
        continue;
      }
      if (text === '') continue;
      if (text.startsWith('#')) {
        this.settings(text.slice(1));
        continue;
      }
      const cols = text.split(',').map((c) => c.trim().toLowerCase());
      if (cols.join(',') !== 'layer,datatype,polygon,x,y') {
        throw new LayoutReadError('csv', `CSV line ${this.line}: header must be "layer,datatype,polygon,x,y", got "${text.slice(0, 80)}"`, { line: this.line });
      }
      this.headerSeen = true;
    }
    if (start >= batch.length) return;
    const firstLine = this.line + 1;
    const rest = batch.slice(start);
    this.line += (rest.match(/\n/g) ?? []).length;
    try {
      parse(rest, {
        comment: '#',
        skip_empty_lines: true,
        trim: true,
        relax_column_count: true,
        on_record: (record: string[], ctx: { lines: number }) => {
          this.row(record, firstLine + ctx.lines - 1);
          return null;
        },
      });
    } catch (err) {
      if (err instanceof LayoutReadError) throw err;
      const lines = (err as { lines?: number }).lines;
      const at = typeof lines === 'number' ? firstLine + lines - 1 : firstLine;
      throw new LayoutReadError('csv', `CSV line ${at}: ${(err as Error).message}`, { line: at });
    }
  }

  private settings(text: string): void {
    for (const part of text.trim().split(/\s+/)) {
      const m = /^([a-z]+)=(.*)$/i.exec(part);
      if (!m) continue;
      const key = (m[1] as string).toLowerCase();
      const value = m[2] as string;
      if (key === 'unit') {
        const scale = { um: 1, nm: 0.001, dbu: NaN }[value.toLowerCase()];
        if (scale === undefined) throw new LayoutReadError('csv', `CSV line ${this.line}: unit must be um, nm or dbu, got "${value}"`, { line: this.line });
        this.unitScale = scale;
      } else if (key === 'dbu') {
        const v = Number(value);
        if (!(v > 0) || !Number.isFinite(v)) throw new LayoutReadError('csv', `CSV line ${this.line}: dbu must be a positive number of µm, got "${value}"`, { line: this.line });
        this.dbuUm = v;
      } else if (key === 'name') {
        this.name = value;
      }
    }
    this.userUnitUm = Number.isNaN(this.unitScale) ? this.dbuUm : this.unitScale;
  }

  private row(r: string[], line: number): void {
    if (r.length !== 5) throw new LayoutReadError('csv', `CSV line ${line}: expected 5 values (layer,datatype,polygon,x,y), got ${r.length}`, { line });
    const [ls, ds, ps, xs, ys] = r as [string, string, string, string, string];
    const layer = Number(ls);
    const datatype = Number(ds);
    if (!/^\d+$/.test(ls) || !/^\d+$/.test(ds) || layer > 65535 || datatype > 65535) {
      throw new LayoutReadError('csv', `CSV line ${line}: layer and datatype must be integers 0–65535, got "${ls}", "${ds}"`, { line });
    }
    if (ps === '') throw new LayoutReadError('csv', `CSV line ${line}: empty polygon id`, { line });
    const x = this.coord(xs, 'x', line);
    const y = this.coord(ys, 'y', line);
    const cur = this.cur;
    if (!cur || cur.layer !== layer || cur.datatype !== datatype || cur.polygon !== ps) {
      this.flushPolygon();
      const id = `${layer}/${datatype}/${ps}`;
      if (this.closed.has(id)) {
        throw new LayoutReadError('csv', `CSV line ${line}: polygon ${ps} on layer ${layer}/${datatype} continues after other rows; keep a polygon's vertices together`, { line });
      }
      this.cur = { layer, datatype, polygon: ps, line, xy: [x, y] };
    } else {
      cur.xy.push(x, y);
    }
    if (++this.points > this.maxPoints) throw new LayoutReadError('too-large', `CSV line ${line}: more than ${this.maxPoints} vertices`, { line });
  }

  private coord(s: string, what: string, line: number): number {
    const v = s === '' ? NaN : Number(s);
    if (!Number.isFinite(v)) throw new LayoutReadError('csv', `CSV line ${line}: ${what} "${s.slice(0, 40)}" is not a number`, { line });
    const dbu = Number.isNaN(this.unitScale) ? v : (v * this.unitScale) / this.dbuUm;
    const r = Math.round(dbu);
    if (Math.abs(dbu - r) > 1e-6 * Math.max(1, Math.abs(dbu)) || Math.abs(r) > 2 ** 31) {
      throw new LayoutReadError('csv', `CSV line ${line}: ${what} ${s} is not on the ${this.dbuUm} µm database grid (or out of range)`, { line });
    }
    return r;
  }

  private flushPolygon(): void {
    const cur = this.cur;
    if (!cur) return;
    this.cur = null;
    this.closed.add(`${cur.layer}/${cur.datatype}/${cur.polygon}`);
    const xy = cur.xy;
    let m = xy.length / 2;
    if (m > 1 && xy[0] === xy[2 * m - 2] && xy[1] === xy[2 * m - 1]) m--;
    if (m < 3) {
      throw new LayoutReadError('csv', `CSV line ${cur.line}: polygon ${cur.polygon} on layer ${cur.layer}/${cur.datatype} has ${m} vertices, at least 3 needed`, { line: cur.line });
    }
    appendRing(shapesFor(this.cell, cur.layer, cur.datatype), xy, 0, 2 * m);
  }
}
