/**
 * Minimal GDSII stream writer (used by the sample generator, tests and the benchmark). Coordinates are integer dbu.
 * Output accumulates in a growing byte buffer; `finish()` returns the file. XY lists longer than 8191 points are
 * split over several XY records, as the format allows.
 */
import { DataType, Rec } from './gdsii-records';
import { encodeReal8 } from './real8';

export interface RefTransform {
  reflect?: boolean;
  mag?: number;
  angleDeg?: number;
  absMag?: boolean;
  absAngle?: boolean;
}

export interface PathOptions {
  pathtype?: 0 | 1 | 2 | 4;
  bgnExt?: number;
  endExt?: number;
}

const MAX_XY_POINTS = 8191;

export class GdsiiWriter {
  private buf = new Uint8Array(1 << 16);
  private len = 0;

  constructor(opts: { libraryName?: string; dbuUm?: number; userUnitUm?: number } = {}) {
    const dbuUm = opts.dbuUm ?? 0.001;
    const userUnitUm = opts.userUnitUm ?? 1;
    this.int16Record(Rec.HEADER, [600]);
    this.int16Record(Rec.BGNLIB, [2026, 1, 1, 0, 0, 0, 2026, 1, 1, 0, 0, 0]);
    this.asciiRecord(Rec.LIBNAME, opts.libraryName ?? 'TRENCHANT');
    this.real8Record(Rec.UNITS, [dbuUm / userUnitUm, dbuUm * 1e-6]);
  }

  /** Append one raw record (header computed from the payload). */
  record(type: number, dataType: number, payload: Uint8Array = new Uint8Array(0)): this {
    const total = 4 + payload.length;
    if (total > 0xffff) throw new RangeError('GDSII record longer than 65535 bytes');
    this.ensure(total);
    const b = this.buf;
    b[this.len] = total >> 8;
    b[this.len + 1] = total & 0xff;
    b[this.len + 2] = type;
    b[this.len + 3] = dataType;
    b.set(payload, this.len + 4);
    this.len += total;
    return this;
  }

  int16Record(type: number, values: number[]): this {
    const p = new Uint8Array(2 * values.length);
    const v = new DataView(p.buffer);
    values.forEach((x, i) => v.setInt16(2 * i, x));
    return this.record(type, type === Rec.STRANS ? DataType.bits : DataType.int16, p);
  }

  int32Record(type: number, values: ArrayLike<number>): this {
    const p = new Uint8Array(4 * values.length);
    const v = new DataView(p.buffer);
    for (let i = 0; i < values.length; i++) v.setInt32(4 * i, values[i] as number);
    return this.record(type, DataType.int32, p);
  }

  real8Record(type: number, values: number[]): this {
    const p = new Uint8Array(8 * values.length);
    values.forEach((x, i) => encodeReal8(x, p, 8 * i));
    return this.record(type, DataType.real8, p);
  }

  asciiRecord(type: number, text: string): this {
    const n = text.length + (text.length & 1);
    const p = new Uint8Array(n);
    for (let i = 0; i < text.length; i++) p[i] = text.charCodeAt(i) & 0xff;
    return this.record(type, DataType.ascii, p);
  }

  beginCell(name: string): this {
    this.int16Record(Rec.BGNSTR, [2026, 1, 1, 0, 0, 0, 2026, 1, 1, 0, 0, 0]);
    return this.asciiRecord(Rec.STRNAME, name);
  }

  endCell(): this {
    return this.record(Rec.ENDSTR, DataType.none);
  }

  /** Polygon ring (without the closing point; it is added here). */
  boundary(layer: number, datatype: number, ring: ArrayLike<number>): this {
    this.record(Rec.BOUNDARY, DataType.none);
    this.int16Record(Rec.LAYER, [layer]);
    this.int16Record(Rec.DATATYPE, [datatype]);
    const closed = new Array<number>(ring.length + 2);
    for (let i = 0; i < ring.length; i++) closed[i] = ring[i] as number;
    closed[ring.length] = ring[0] as number;
    closed[ring.length + 1] = ring[1] as number;
    this.xy(closed);
    return this.record(Rec.ENDEL, DataType.none);
  }

  rect(layer: number, datatype: number, x0: number, y0: number, x1: number, y1: number): this {
    return this.boundary(layer, datatype, [x0, y0, x1, y0, x1, y1, x0, y1]);
  }

  /** PATH; a negative width means absolute width (not scaled by magnification). */
  path(layer: number, datatype: number, centre: ArrayLike<number>, width: number, opts: PathOptions = {}): this {
    this.record(Rec.PATH, DataType.none);
    this.int16Record(Rec.LAYER, [layer]);
    this.int16Record(Rec.DATATYPE, [datatype]);
    const pt = opts.pathtype ?? 0;
    if (pt !== 0) this.int16Record(Rec.PATHTYPE, [pt]);
    this.int32Record(Rec.WIDTH, [width]);
    if (pt === 4) {
      this.int32Record(Rec.BGNEXTN, [opts.bgnExt ?? 0]);
      this.int32Record(Rec.ENDEXTN, [opts.endExt ?? 0]);
    }
    this.xy(centre);
    return this.record(Rec.ENDEL, DataType.none);
  }

  box(layer: number, boxtype: number, x0: number, y0: number, x1: number, y1: number): this {
    this.record(Rec.BOX, DataType.none);
    this.int16Record(Rec.LAYER, [layer]);
    this.int16Record(Rec.BOXTYPE, [boxtype]);
    this.xy([x0, y0, x1, y0, x1, y1, x0, y1, x0, y0]);
    return this.record(Rec.ENDEL, DataType.none);
  }

  sref(cell: string, x: number, y: number, t: RefTransform = {}): this {
    this.record(Rec.SREF, DataType.none);
    this.asciiRecord(Rec.SNAME, cell);
    this.strans(t);
    this.xy([x, y]);
    return this.record(Rec.ENDEL, DataType.none);
  }

  /** AREF with lattice points p1 (origin), p2 = p1 + cols·colStep, p3 = p1 + rows·rowStep (parent frame). */
  aref(cell: string, cols: number, rows: number, p1: [number, number], p2: [number, number], p3: [number, number], t: RefTransform = {}): this {
    this.record(Rec.AREF, DataType.none);
    this.asciiRecord(Rec.SNAME, cell);
    this.strans(t);
    this.int16Record(Rec.COLROW, [cols, rows]);
    this.xy([...p1, ...p2, ...p3]);
    return this.record(Rec.ENDEL, DataType.none);
  }

  text(layer: number, texttype: number, x: number, y: number, text: string): this {
    this.record(Rec.TEXT, DataType.none);
    this.int16Record(Rec.LAYER, [layer]);
    this.int16Record(Rec.TEXTTYPE, [texttype]);
    this.xy([x, y]);
    this.asciiRecord(Rec.STRING, text);
    return this.record(Rec.ENDEL, DataType.none);
  }

  /** XY, split into records of at most 8191 points. */
  xy(values: ArrayLike<number>): this {
    const pts = values.length >> 1;
    for (let p = 0; p < pts || p === 0; p += MAX_XY_POINTS) {
      const q = Math.min(pts, p + MAX_XY_POINTS);
      const slice = new Array<number>(2 * (q - p));
      for (let i = 2 * p; i < 2 * q; i++) slice[i - 2 * p] = values[i] as number;
      this.int32Record(Rec.XY, slice);
      if (pts === 0) break;
    }
    return this;
  }

  /** Hand over the bytes written so far and start an empty buffer: lets a caller stream a large file to disk. */
  drain(): Uint8Array {
    const out = this.buf.slice(0, this.len);
    this.len = 0;
    return out;
  }

  finish(): Uint8Array {
    this.record(Rec.ENDLIB, DataType.none);
    return this.buf.slice(0, this.len);
  }

  private strans(t: RefTransform): void {
    const flags = (t.reflect ? 0x8000 : 0) | (t.absMag ? 0x0004 : 0) | (t.absAngle ? 0x0002 : 0);
    if (!flags && t.mag === undefined && t.angleDeg === undefined) return;
    this.int16Record(Rec.STRANS, [flags << 16 >> 16]);
    if (t.mag !== undefined) this.real8Record(Rec.MAG, [t.mag]);
    if (t.angleDeg !== undefined) this.real8Record(Rec.ANGLE, [t.angleDeg]);
  }

  private ensure(extra: number): void {
    if (this.len + extra <= this.buf.length) return;
    let cap = this.buf.length * 2;
    while (cap < this.len + extra) cap *= 2;
    const next = new Uint8Array(cap);
    next.set(this.buf.subarray(0, this.len));
    this.buf = next;
  }
}
