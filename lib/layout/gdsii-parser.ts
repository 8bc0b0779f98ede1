/**
 * Incremental GDSII stream parser: feed byte chunks of any size with `push`, then `finish` returns the hierarchy.
 * Records split across chunk boundaries are carried over (a record is at most 65 535 bytes), so memory holds the
 * parsed geometry, never the file. Every record type of the manual (0x00–0x3B) is either interpreted or skipped
 * by its length; anything else is an error naming the byte offset.
 *
 * Where polygons go is up to an `ElementSink`: by default they are kept in the cells (the whole-file reader); the
 * GDSII index (gdsii-index.ts) keeps only each element's byte offset and bbox, and `elementDecoder` re-reads single
 * elements for a tile, so every path shares one validation and one geometry construction. One element's records and
 * what it becomes: gdsii-element.ts.
 */
import { LayoutReadError } from './errors';
import { ELEMENT_START, GdsiiElement, type ElementContext } from './gdsii-element';
import { ascii, expectRecord, fail, hex } from './gdsii-fields';
import { DataType, LAST_RECORD_TYPE, Rec, recordName } from './gdsii-records';
import { CellShapesSink, type ElementSink } from './gdsii-sink';
import { decodeReal8 } from './real8';
import { newCell, type CellDef, type GdsLibrary } from './library';

export { CellShapesSink, type ElementSink } from './gdsii-sink';

/** Parser states (plain numbers; the style guide avoids TS enums). */
const State = { Header: 0, BgnLib: 1, LibHead: 2, Body: 3, Struct: 4, Element: 5, Done: 6 } as const;

export class GdsiiParser {
  private state: number = State.Header;
  private base = 0;
  private carry = new Uint8Array(65540);
  private carryLen = 0;
  private cell: CellDef | null = null;
  private readonly lib: GdsLibrary = { libraryName: '', dbuUm: NaN, userUnitUm: NaN, cells: [], cellIndex: new Map(), warnings: [] };
  private readonly dropped = { dropped: 0 };
  private readonly element = new GdsiiElement();
  private readonly ctx: ElementContext;

  constructor(sink: ElementSink = new CellShapesSink()) {
    this.ctx = { sink, warnings: this.lib.warnings, dropped: this.dropped, cellIndexOf: (name, refOffset) => this.cellIndexOf(name, refOffset) };
  }

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

  private record(b: Uint8Array, p: number, len: number, at: number): void {
    const type = b[p + 2] as number;
    const dt = b[p + 3] as number;
    const q = p + 4;
    const n = len - 4;
    if (type > LAST_RECORD_TYPE) {
      fail('unknown-record', `unknown record type 0x${type.toString(16).toUpperCase().padStart(2, '0')} at byte ${at}`, at);
    }
    if (dt > DataType.ascii) fail('bad-record', `${recordName(type)} record at byte ${at} has invalid data type ${dt}`, at);

    switch (this.state) {
      case State.Header:
        this.state = State.BgnLib;
        return;
      case State.BgnLib:
        if (type !== Rec.BGNLIB) fail('bad-structure', `expected BGNLIB after HEADER, found ${recordName(type)} at byte ${at}`, at);
        this.state = State.LibHead;
        return;
      case State.LibHead:
        if (type === Rec.LIBNAME) {
          expectRecord(type, dt, DataType.ascii, n, 0, at);
          this.lib.libraryName = ascii(b, q, n);
        } else if (type === Rec.UNITS) {
          expectRecord(type, dt, DataType.real8, n, 16, at);
          const dbuInUser = decodeReal8(b, q);
          const dbuMetres = decodeReal8(b, q + 8);
          if (!(dbuInUser > 0) || !(dbuMetres > 0) || !Number.isFinite(dbuInUser) || !Number.isFinite(dbuMetres)) {
            fail('bad-record', `UNITS record at byte ${at} has non-positive units (${dbuInUser}, ${dbuMetres})`, at);
          }
          this.lib.dbuUm = dbuMetres * 1e6;
          this.lib.userUnitUm = (dbuMetres / dbuInUser) * 1e6;
        } else if (type === Rec.BGNSTR || type === Rec.ENDLIB) {
          if (!(this.lib.dbuUm > 0)) fail('bad-structure', `no UNITS record before ${recordName(type)} at byte ${at}`, at);
          this.state = State.Body;
          this.record(b, p, len, at);
        } else if (ELEMENT_START.has(type) || type === Rec.ENDSTR || type === Rec.ENDEL || type === Rec.XY) {
          fail('bad-structure', `${recordName(type)} at byte ${at} outside a structure`, at);
        }
        return; // REFLIBS, FONTS, ATTRTABLE, GENERATIONS, FORMAT, MASK, ENDMASKS, LIBDIRSIZE, SRFNAME, LIBSECUR...: skipped
      case State.Body:
        if (type === Rec.BGNSTR) {
          this.state = State.Struct;
          this.cell = null;
        } else if (type === Rec.ENDLIB) {
          this.state = State.Done;
        } else if (type !== Rec.PROPATTR && type !== Rec.PROPVALUE) {
          fail('bad-structure', `expected BGNSTR or ENDLIB, found ${recordName(type)} at byte ${at}`, at);
        }
        return;
      case State.Struct:
        if (type === Rec.STRNAME) {
          expectRecord(type, dt, DataType.ascii, n, 1, at);
          const name = ascii(b, q, n);
          const idx = this.cellIndexOf(name, -1);
          const cell = this.lib.cells[idx] as CellDef;
          if (cell.defined) fail('duplicate-cell', `cell "${name}" is defined twice (second STRNAME at byte ${at})`, at);
          cell.defined = true;
          this.cell = cell;
        } else if (ELEMENT_START.has(type)) {
          if (!this.cell) fail('bad-structure', `${recordName(type)} at byte ${at} before the structure's STRNAME`, at);
          this.element.begin(type, at);
          this.state = State.Element;
        } else if (type === Rec.ENDSTR) {
          if (!this.cell) fail('bad-structure', `ENDSTR at byte ${at} closes a structure without STRNAME`, at);
          this.state = State.Body;
        } else if (type === Rec.ENDLIB || type === Rec.BGNSTR || type === Rec.XY || type === Rec.ENDEL) {
          fail('bad-structure', `unexpected ${recordName(type)} at byte ${at} inside a structure`, at);
        }
        return; // STRCLASS, PROPATTR...: skipped
      case State.Element:
        if (this.element.record(type, dt, b, q, n, at)) {
          this.element.finish(this.cell as CellDef, this.ctx);
          this.state = State.Struct;
        }
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
}
