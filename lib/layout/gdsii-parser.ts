/**
 * Incremental GDSII stream parser: feed byte chunks of any size with `push`, then `finish` returns the hierarchy.
 * Records split across chunk boundaries are carried over (a record is at most 65 535 bytes), so memory holds the
 * parsed geometry, never the file. Every record type of the manual (0x00–0x3B) is either interpreted or skipped
 * by its length; anything else is an error naming the byte offset.
 *
 * Where polygons go is up to an `ElementSink`: by default they are kept in the cells (the whole-file reader); the
 * GDSII index (gdsii-index.ts) keeps only each element's byte offset and bbox, and `elementDecoder` re-reads single
 * elements for a tile, so every path shares one validation and one geometry construction.
 */
import { LayoutReadError, pushWarning } from './errors';
import { DataType, LAST_RECORD_TYPE, Rec, recordName } from './gdsii-records';
import { decodeReal8 } from './real8';
import { GrowF64 } from './grow-buffer';
import { appendRing, layerKey, newCell, shapesFor, type CellDef, type CellShapes, type GdsLibrary } from './library';
import { pathOutline } from './path-outline';

/** Parser states (plain numbers; the style guide avoids TS enums). */
const State = { Header: 0, BgnLib: 1, LibHead: 2, Body: 3, Struct: 4, Element: 5, Done: 6 } as const;

/**
 * Receives each polygon element once validated: `xy[0..n)` is the ring (interleaved, closing point dropped) of a
 * BOUNDARY/BOX or the outline of a positive-width PATH, in the cell's frame; `offset` is the element's first byte.
 */
export interface ElementSink {
  ring(cell: CellDef, layer: number, datatype: number, xy: ArrayLike<number>, n: number, offset: number): void;
  /** Whether TEXT labels are kept in `cell.labels` (the index drops them: a tile has no labels). */
  readonly keepLabels: boolean;
}

/** The default sink: polygons kept in the cell, counter-clockwise (see library.ts). */
export class CellShapesSink implements ElementSink {
  readonly keepLabels = true;
  private lastShapes: CellShapes | null = null;
  private lastCell: CellDef | null = null;

  ring(cell: CellDef, layer: number, datatype: number, xy: ArrayLike<number>, n: number): void {
    // Consecutive elements on one layer skip the map lookup.
    const last = this.lastShapes;
    const shapes = last && this.lastCell === cell && last.layer === layer && last.datatype === datatype ? last : (this.lastShapes = shapesFor(cell, layer, datatype));
    this.lastCell = cell;
    appendRing(shapes, xy, 0, n);
  }
}

const ELEMENT_START = new Set<number>([Rec.BOUNDARY, Rec.PATH, Rec.SREF, Rec.AREF, Rec.TEXT, Rec.NODE, Rec.BOX]);

interface ElementState {
  kind: number;
  offset: number;
  layer: number;
  datatype: number;
  width: number;
  pathtype: number;
  bgnExt: number;
  endExt: number;
  sname: string | null;
  snameOffset: number;
  strans: number;
  mag: number;
  angle: number;
  cols: number;
  rows: number;
  text: string;
  xy: GrowF64;
  hasXy: boolean;
}

function i16(b: Uint8Array, q: number, k: number): number {
  return (((b[q + 2 * k] as number) << 24) | ((b[q + 2 * k + 1] as number) << 16)) >> 16;
}

function i32(b: Uint8Array, q: number, k: number): number {
  const i = q + 4 * k;
  return ((b[i] as number) << 24) | ((b[i + 1] as number) << 16) | ((b[i + 2] as number) << 8) | (b[i + 3] as number);
}

function hex(b: Uint8Array, from: number, n: number): string {
  return Array.from(b.subarray(from, from + n), (v) => v.toString(16).padStart(2, '0')).join(' ');
}

export class GdsiiParser {
  private state: number = State.Header;
  private base = 0;
  private carry = new Uint8Array(65540);
  private carryLen = 0;
  private cell: CellDef | null = null;
  private readonly lib: GdsLibrary = { libraryName: '', dbuUm: NaN, userUnitUm: NaN, cells: [], cellIndex: new Map(), warnings: [] };
  private readonly dropped = { dropped: 0 };
  private readonly el: ElementState = {
    kind: -1, offset: 0, layer: -1, datatype: 0, width: 0, pathtype: 0, bgnExt: 0, endExt: 0, sname: null,
    snameOffset: 0, strans: 0, mag: 1, angle: 0, cols: 0, rows: 0, text: '', xy: new GrowF64(256), hasXy: false,
  };
  private readonly scratch: number[] = [];

  constructor(private readonly sink: ElementSink = new CellShapesSink()) {}

  /**
   * A parser that takes the records of single elements of `cell` (already validated by an earlier full pass) and
   * hands their polygons to `sink`: the tile reader's way to decode elements read by position.
   */
  static elementDecoder(cell: CellDef, sink: ElementSink): GdsiiParser {
    const p = new GdsiiParser(sink);
    p.state = State.Struct;
    p.cell = cell;
    return p;
  }

  /** Bytes consumed so far. */
  get bytesRead(): number {
    return this.base;
  }

  push(chunk: Uint8Array): void {
    if (this.state === State.Done) {
      this.base += chunk.length;
      return;
    }
    let pos = 0;
    if (this.carryLen > 0) {
      // Complete the record begun in an earlier chunk.
      if (this.carryLen < 4) {
        const take = Math.min(4 - this.carryLen, chunk.length);
        this.carry.set(chunk.subarray(0, take), this.carryLen);
        this.carryLen += take;
        pos = take;
      }
      if (this.carryLen >= 4) {
        const len = this.checkLength(this.carry, 0, this.base - this.carryLen + pos);
        const take = Math.min(len - this.carryLen, chunk.length - pos);
        this.carry.set(chunk.subarray(pos, pos + take), this.carryLen);
        this.carryLen += take;
        pos += take;
        if (this.carryLen === len) {
          this.carryLen = 0;
          this.record(this.carry, 0, len, this.base + pos - len);
        }
      }
    }
    const n = chunk.length;
    while (this.state !== State.Done && pos + 4 <= n) {
      const len = this.checkLength(chunk, pos, this.base + pos);
      if (pos + len > n) break;
      this.record(chunk, pos, len, this.base + pos);
      pos += len;
    }
    if (this.state !== State.Done && pos < n) {
      this.carry.set(chunk.subarray(pos), this.carryLen);
      this.carryLen += n - pos;
    }
    this.base += n;
  }

  finish(): GdsLibrary {
    if (this.base === 0) throw new LayoutReadError('empty', 'empty file (0 bytes)', { offset: 0 });
    if (this.state !== State.Done) {
      if (this.carryLen > 0) {
        const at = this.base - this.carryLen;
        const what = this.carryLen >= 4 ? `${recordName(this.carry[2] ?? 0)} record` : 'record header';
        throw new LayoutReadError('truncated', `truncated GDSII: file ends inside a ${what} starting at byte ${at}`, { offset: at });
      }
      throw new LayoutReadError('truncated', `truncated GDSII: file ends at byte ${this.base} before ENDLIB`, { offset: this.base });
    }
    if (this.dropped.dropped > 0) {
      this.lib.warnings.push({ code: 'more-warnings', message: `${this.dropped.dropped} more warnings of the same kinds not listed` });
    }
    return this.lib;
  }

  private checkLength(b: Uint8Array, p: number, at: number): number {
    const len = ((b[p] ?? 0) << 8) | (b[p + 1] ?? 0);
    if (this.state === State.Header) this.checkHeader(b, p, len, at);
    if (len < 4) throw new LayoutReadError('bad-record-length', `record length ${len} at byte ${at} is shorter than the 4-byte record header`, { offset: at });
    if (len & 1) throw new LayoutReadError('bad-record-length', `odd record length ${len} at byte ${at} (GDSII records have even lengths)`, { offset: at });
    return len;
  }

  private checkHeader(b: Uint8Array, p: number, len: number, at: number): void {
    if (len !== 6 || b[p + 2] !== Rec.HEADER || b[p + 3] !== DataType.int16) {
      throw new LayoutReadError('not-gdsii', `not a GDSII stream file: the first record is not HEADER (first bytes ${hex(b, p, 4)} at byte ${at})`, { offset: at });
    }
  }

  private fail(code: 'bad-record' | 'bad-structure' | 'unknown-record' | 'missing-xy' | 'duplicate-cell', msg: string, at: number): never {
    throw new LayoutReadError(code, msg, { offset: at });
  }

  private expect(type: number, dt: number, want: number, len: number, minLen: number, at: number): void {
    if (dt !== want || len < minLen) {
      this.fail('bad-record', `${recordName(type)} record at byte ${at} has data type ${dt} and ${len} payload bytes, expected data type ${want} with at least ${minLen}`, at);
    }
  }

  private ascii(b: Uint8Array, p: number, len: number): string {
    let end = p + len;
    while (end > p && b[end - 1] === 0) end--;
    let s = '';
    for (let i = p; i < end; i++) s += String.fromCharCode(b[i] as number);
    return s;
  }

  private record(b: Uint8Array, p: number, len: number, at: number): void {
    const type = b[p + 2] as number;
    const dt = b[p + 3] as number;
    const q = p + 4;
    const n = len - 4;
    if (type > LAST_RECORD_TYPE) {
      this.fail('unknown-record', `unknown record type 0x${type.toString(16).toUpperCase().padStart(2, '0')} at byte ${at}`, at);
    }
    if (dt > DataType.ascii) this.fail('bad-record', `${recordName(type)} record at byte ${at} has invalid data type ${dt}`, at);

    switch (this.state) {
      case State.Header:
        this.state = State.BgnLib;
        return;
      case State.BgnLib:
        if (type !== Rec.BGNLIB) this.fail('bad-structure', `expected BGNLIB after HEADER, found ${recordName(type)} at byte ${at}`, at);
        this.state = State.LibHead;
        return;
      case State.LibHead:
        if (type === Rec.LIBNAME) {
          this.expect(type, dt, DataType.ascii, n, 0, at);
          this.lib.libraryName = this.ascii(b, q, n);
        } else if (type === Rec.UNITS) {
          this.expect(type, dt, DataType.real8, n, 16, at);
          const dbuInUser = decodeReal8(b, q);
          const dbuMetres = decodeReal8(b, q + 8);
          if (!(dbuInUser > 0) || !(dbuMetres > 0) || !Number.isFinite(dbuInUser) || !Number.isFinite(dbuMetres)) {
            this.fail('bad-record', `UNITS record at byte ${at} has non-positive units (${dbuInUser}, ${dbuMetres})`, at);
          }
          this.lib.dbuUm = dbuMetres * 1e6;
          this.lib.userUnitUm = (dbuMetres / dbuInUser) * 1e6;
        } else if (type === Rec.BGNSTR || type === Rec.ENDLIB) {
          if (!(this.lib.dbuUm > 0)) this.fail('bad-structure', `no UNITS record before ${recordName(type)} at byte ${at}`, at);
          this.state = State.Body;
          this.record(b, p, len, at);
        } else if (ELEMENT_START.has(type) || type === Rec.ENDSTR || type === Rec.ENDEL || type === Rec.XY) {
          this.fail('bad-structure', `${recordName(type)} at byte ${at} outside a structure`, at);
        }
        return; // REFLIBS, FONTS, ATTRTABLE, GENERATIONS, FORMAT, MASK, ENDMASKS, LIBDIRSIZE, SRFNAME, LIBSECUR...: skipped
      case State.Body:
        if (type === Rec.BGNSTR) {
          this.state = State.Struct;
          this.cell = null;
        } else if (type === Rec.ENDLIB) {
          this.state = State.Done;
        } else if (type !== Rec.PROPATTR && type !== Rec.PROPVALUE) {
          this.fail('bad-structure', `expected BGNSTR or ENDLIB, found ${recordName(type)} at byte ${at}`, at);
        }
        return;
      case State.Struct:
        if (type === Rec.STRNAME) {
          this.expect(type, dt, DataType.ascii, n, 1, at);
          const name = this.ascii(b, q, n);
          const idx = this.cellIndexOf(name, -1);
          const cell = this.lib.cells[idx] as CellDef;
          if (cell.defined) this.fail('duplicate-cell', `cell "${name}" is defined twice (second STRNAME at byte ${at})`, at);
          cell.defined = true;
          this.cell = cell;
        } else if (ELEMENT_START.has(type)) {
          if (!this.cell) this.fail('bad-structure', `${recordName(type)} at byte ${at} before the structure's STRNAME`, at);
          this.beginElement(type, at);
        } else if (type === Rec.ENDSTR) {
          if (!this.cell) this.fail('bad-structure', `ENDSTR at byte ${at} closes a structure without STRNAME`, at);
          this.state = State.Body;
        } else if (type === Rec.ENDLIB || type === Rec.BGNSTR || type === Rec.XY || type === Rec.ENDEL) {
          this.fail('bad-structure', `unexpected ${recordName(type)} at byte ${at} inside a structure`, at);
        }
        return; // STRCLASS, PROPATTR...: skipped
      case State.Element:
        this.elementRecord(type, dt, b, q, n, at);
        return;
      case State.Done:
        return;
    }
  }

  private cellIndexOf(name: string, refOffset: number): number {
    let idx = this.lib.cellIndex.get(name);
    if (idx === undefined) {
      idx = this.lib.cells.length;
      this.lib.cells.push(newCell(name));
      this.lib.cellIndex.set(name, idx);
    }
    const cell = this.lib.cells[idx] as CellDef;
    if (refOffset >= 0 && cell.firstRefOffset < 0) cell.firstRefOffset = refOffset;
    return idx;
  }

  private beginElement(kind: number, at: number): void {
    const e = this.el;
    e.kind = kind; e.offset = at; e.layer = -1; e.datatype = 0; e.width = 0; e.pathtype = 0; e.bgnExt = 0; e.endExt = 0;
    e.sname = null; e.strans = 0; e.mag = 1; e.angle = 0; e.cols = 0; e.rows = 0; e.text = ''; e.xy.length = 0; e.hasXy = false;
    this.state = State.Element;
  }

  private elementRecord(type: number, dt: number, b: Uint8Array, q: number, n: number, at: number): void {
    const e = this.el;
    switch (type) {
      case Rec.LAYER: this.expect(type, dt, DataType.int16, n, 2, at); e.layer = i16(b, q, 0); return;
      case Rec.DATATYPE: case Rec.TEXTTYPE: case Rec.BOXTYPE: case Rec.NODETYPE:
        this.expect(type, dt, DataType.int16, n, 2, at); e.datatype = i16(b, q, 0); return;
      case Rec.WIDTH: this.expect(type, dt, DataType.int32, n, 4, at); e.width = i32(b, q, 0); return;
      case Rec.PATHTYPE: this.expect(type, dt, DataType.int16, n, 2, at); e.pathtype = i16(b, q, 0); return;
      case Rec.BGNEXTN: this.expect(type, dt, DataType.int32, n, 4, at); e.bgnExt = i32(b, q, 0); return;
      case Rec.ENDEXTN: this.expect(type, dt, DataType.int32, n, 4, at); e.endExt = i32(b, q, 0); return;
      case Rec.SNAME: this.expect(type, dt, DataType.ascii, n, 1, at); e.sname = this.ascii(b, q, n); e.snameOffset = at; return;
      case Rec.STRANS: this.expect(type, dt, DataType.bits, n, 2, at); e.strans = i16(b, q, 0) & 0xffff; return;
      case Rec.MAG: this.expect(type, dt, DataType.real8, n, 8, at); e.mag = decodeReal8(b, q); return;
      case Rec.ANGLE: this.expect(type, dt, DataType.real8, n, 8, at); e.angle = decodeReal8(b, q); return;
      case Rec.COLROW: this.expect(type, dt, DataType.int16, n, 4, at); e.cols = i16(b, q, 0); e.rows = i16(b, q, 1); return;
      case Rec.STRING: this.expect(type, dt, DataType.ascii, n, 0, at); e.text = this.ascii(b, q, n); return;
      case Rec.XY: {
        this.expect(type, dt, DataType.int32, n, 8, at);
        if (n % 8 !== 0) this.fail('bad-record', `XY record at byte ${at} has ${n} payload bytes, not a whole number of points`, at);
        const d = e.xy.reserve(n >> 2);
        let k = e.xy.length;
        for (let i = q, end = q + n; i < end; i += 4) d[k++] = ((b[i] as number) << 24) | ((b[i + 1] as number) << 16) | ((b[i + 2] as number) << 8) | (b[i + 3] as number);
        e.xy.length = k;
        e.hasXy = true;
        return;
      }
      case Rec.ENDEL: this.endElement(); this.state = State.Struct; return;
      default:
        if (ELEMENT_START.has(type) || type === Rec.ENDSTR || type === Rec.ENDLIB || type === Rec.BGNSTR || type === Rec.STRNAME) {
          this.fail('bad-structure', `${recordName(e.kind)} element at byte ${e.offset} not closed by ENDEL before ${recordName(type)} at byte ${at}`, at);
        }
        // PRESENTATION, PLEX, ELFLAGS, PROPATTR, PROPVALUE, WIDTH-less text attributes...: skipped by length.
        return;
    }
  }

  private endElement(): void {
    const e = this.el;
    const cell = this.cell as CellDef;
    cell.elementCount++;
    if (e.kind === Rec.NODE) return; // electrical nodes have no mask geometry
    if (!e.hasXy) this.fail('missing-xy', `${recordName(e.kind)} element at byte ${e.offset} has no XY record`, e.offset);
    const xy = e.xy.data;
    const pts = e.xy.length >> 1;
    const needLayer = e.kind === Rec.BOUNDARY || e.kind === Rec.PATH || e.kind === Rec.BOX || e.kind === Rec.TEXT;
    if (needLayer && e.layer < 0) this.fail('bad-record', `${recordName(e.kind)} element at byte ${e.offset} has no LAYER record`, e.offset);
    switch (e.kind) {
      case Rec.BOUNDARY:
      case Rec.BOX: {
        let m = pts;
        if (m > 1 && xy[0] === xy[2 * m - 2] && xy[1] === xy[2 * m - 1]) m--;
        else if (m >= 3) {
          // The manual requires first = last. Close it implicitly (the ring is stored without the closing point
          // anyway) but say so: a designer should know the writer produced a malformed element.
          pushWarning(this.lib.warnings, this.dropped, {
            code: 'unclosed-boundary',
            message: `${recordName(e.kind)} element at byte ${e.offset} is not closed (last point (${xy[2 * m - 2]}, ${xy[2 * m - 1]}) differs from the first (${xy[0]}, ${xy[1]})); closed implicitly`,
            offset: e.offset,
          });
        }
        if (m < 3) this.fail('bad-record', `${recordName(e.kind)} element at byte ${e.offset} has ${pts} points; a closed polygon needs at least 4`, e.offset);
        this.sink.ring(cell, e.layer, e.datatype, xy, 2 * m, e.offset);
        return;
      }
      case Rec.PATH: {
        if (e.pathtype !== 0 && e.pathtype !== 1 && e.pathtype !== 2 && e.pathtype !== 4) {
          this.fail('bad-record', `${recordName(e.kind)} element at byte ${e.offset} has unsupported PATHTYPE ${e.pathtype} (0, 1, 2 or 4 expected)`, e.offset);
        }
        const spec = { halfWidth: Math.abs(e.width) / 2, pathtype: e.pathtype, bgnExt: e.bgnExt, endExt: e.endExt };
        const out = this.scratch;
        out.length = 0;
        const outPts = pathOutline(xy, pts, spec, out);
        if (outPts === 0) return;
        if (e.width < 0) {
          cell.absPaths.push({ key: layerKey(e.layer, e.datatype), layer: e.layer, datatype: e.datatype, centre: xy.slice(0, 2 * pts), ...spec, points: outPts });
          return;
        }
        this.sink.ring(cell, e.layer, e.datatype, out, out.length, e.offset);
        return;
      }
      case Rec.TEXT:
        if (this.sink.keepLabels) cell.labels.push({ layer: e.layer, texttype: e.datatype, text: e.text, x: xy[0] as number, y: xy[1] as number });
        return;
      case Rec.SREF:
      case Rec.AREF: {
        const isA = e.kind === Rec.AREF;
        if (e.sname === null) this.fail('bad-record', `${recordName(e.kind)} element at byte ${e.offset} has no SNAME record`, e.offset);
        if (pts < (isA ? 3 : 1)) this.fail('bad-record', `${recordName(e.kind)} element at byte ${e.offset} has ${pts} XY points, ${isA ? 3 : 1} needed`, e.offset);
        if (isA && (e.cols < 1 || e.rows < 1)) this.fail('bad-record', `${recordName(e.kind)} element at byte ${e.offset} has COLROW ${e.cols}×${e.rows}; both must be at least 1`, e.offset);
        if (!(e.mag > 0) || !Number.isFinite(e.mag) || !Number.isFinite(e.angle)) this.fail('bad-record', `${recordName(e.kind)} element at byte ${e.offset} has MAG ${e.mag} and ANGLE ${e.angle}; MAG must be positive and both finite`, e.offset);
        const x = xy[0] as number;
        const y = xy[1] as number;
        const cols = isA ? e.cols : 1;
        const rows = isA ? e.rows : 1;
        cell.refs.push({
          child: this.cellIndexOf(e.sname, e.snameOffset), x, y,
          reflect: (e.strans & 0x8000) !== 0, mag: e.mag, angleDeg: e.angle,
          absMag: (e.strans & 0x0004) !== 0, absAngle: (e.strans & 0x0002) !== 0,
          cols, rows,
          colDx: isA ? ((xy[2] as number) - x) / cols : 0, colDy: isA ? ((xy[3] as number) - y) / cols : 0,
          rowDx: isA ? ((xy[4] as number) - x) / rows : 0, rowDy: isA ? ((xy[5] as number) - y) / rows : 0,
          offset: e.offset,
        });
        return;
      }
    }
  }
}
