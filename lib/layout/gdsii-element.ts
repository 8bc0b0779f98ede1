/**
 * One GDSII element between its opening record (BOUNDARY, PATH, SREF, AREF, TEXT, NODE, BOX) and ENDEL: its
 * records are collected, checked, and the finished element becomes a polygon (to an ElementSink), a cell reference,
 * a label or an absolute-width path. The record framing and structure states are in gdsii-parser.ts.
 */
import { pushWarning, type LayoutWarning } from './errors';
import { ascii, expectRecord, fail, i16, i32 } from './gdsii-fields';
import { DataType, Rec, recordName } from './gdsii-records';
import type { ElementSink } from './gdsii-sink';
import { GrowF64 } from './grow-buffer';
import { decodeReal8 } from './real8';
import { layerKey, type CellDef } from './library';
import { pathOutline } from './path-outline';

/** Record types that open an element. */
export const ELEMENT_START = new Set<number>([Rec.BOUNDARY, Rec.PATH, Rec.SREF, Rec.AREF, Rec.TEXT, Rec.NODE, Rec.BOX]);

/** What a finished element needs from the parser: where polygons go, warnings, and cell numbers by name. */
export interface ElementContext {
  readonly sink: ElementSink;
  readonly warnings: LayoutWarning[];
  readonly dropped: { dropped: number };
  cellIndexOf(name: string, refOffset: number): number;
}

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

/** The element being read; one per parser, reset by `begin` (no allocation per element). */
export class GdsiiElement {
  private readonly el: ElementState = {
    kind: -1, offset: 0, layer: -1, datatype: 0, width: 0, pathtype: 0, bgnExt: 0, endExt: 0, sname: null,
    snameOffset: 0, strans: 0, mag: 1, angle: 0, cols: 0, rows: 0, text: '', xy: new GrowF64(256), hasXy: false,
  };
  private readonly scratch: number[] = [];

  begin(kind: number, at: number): void {
    const e = this.el;
    e.kind = kind; e.offset = at; e.layer = -1; e.datatype = 0; e.width = 0; e.pathtype = 0; e.bgnExt = 0; e.endExt = 0;
    e.sname = null; e.strans = 0; e.mag = 1; e.angle = 0; e.cols = 0; e.rows = 0; e.text = ''; e.xy.length = 0; e.hasXy = false;
  }

  /** One record inside the element; true at its ENDEL (then call `finish`). */
  record(type: number, dt: number, b: Uint8Array, q: number, n: number, at: number): boolean {
    const e = this.el;
    switch (type) {
      case Rec.LAYER: expectRecord(type, dt, DataType.int16, n, 2, at); e.layer = i16(b, q, 0); return false;
      case Rec.DATATYPE: case Rec.TEXTTYPE: case Rec.BOXTYPE: case Rec.NODETYPE:
        expectRecord(type, dt, DataType.int16, n, 2, at); e.datatype = i16(b, q, 0); return false;
      case Rec.WIDTH: expectRecord(type, dt, DataType.int32, n, 4, at); e.width = i32(b, q, 0); return false;
      case Rec.PATHTYPE: expectRecord(type, dt, DataType.int16, n, 2, at); e.pathtype = i16(b, q, 0); return false;
      case Rec.BGNEXTN: expectRecord(type, dt, DataType.int32, n, 4, at); e.bgnExt = i32(b, q, 0); return false;
      case Rec.ENDEXTN: expectRecord(type, dt, DataType.int32, n, 4, at); e.endExt = i32(b, q, 0); return false;
      case Rec.SNAME: expectRecord(type, dt, DataType.ascii, n, 1, at); e.sname = ascii(b, q, n); e.snameOffset = at; return false;
      case Rec.STRANS: expectRecord(type, dt, DataType.bits, n, 2, at); e.strans = i16(b, q, 0) & 0xffff; return false;
      case Rec.MAG: expectRecord(type, dt, DataType.real8, n, 8, at); e.mag = decodeReal8(b, q); return false;
      case Rec.ANGLE: expectRecord(type, dt, DataType.real8, n, 8, at); e.angle = decodeReal8(b, q); return false;
      case Rec.COLROW: expectRecord(type, dt, DataType.int16, n, 4, at); e.cols = i16(b, q, 0); e.rows = i16(b, q, 1); return false;
      case Rec.STRING: expectRecord(type, dt, DataType.ascii, n, 0, at); e.text = ascii(b, q, n); return false;
      case Rec.XY: {
        expectRecord(type, dt, DataType.int32, n, 8, at);
        if (n % 8 !== 0) fail('bad-record', `XY record at byte ${at} has ${n} payload bytes, not a whole number of points`, at);
        const d = e.xy.reserve(n >> 2);
        let k = e.xy.length;
        for (let i = q, end = q + n; i < end; i += 4) d[k++] = ((b[i] as number) << 24) | ((b[i + 1] as number) << 16) | ((b[i + 2] as number) << 8) | (b[i + 3] as number);
        e.xy.length = k;
        e.hasXy = true;
        return false;
      }
      case Rec.ENDEL: return true;
      default:
        if (ELEMENT_START.has(type) || type === Rec.ENDSTR || type === Rec.ENDLIB || type === Rec.BGNSTR || type === Rec.STRNAME) {
          fail('bad-structure', `${recordName(e.kind)} element at byte ${e.offset} not closed by ENDEL before ${recordName(type)} at byte ${at}`, at);
        }
        // PRESENTATION, PLEX, ELFLAGS, PROPATTR, PROPVALUE, WIDTH-less text attributes...: skipped by length.
        return false;
    }
  }

  /** The finished element into `cell`: a polygon to the sink, a reference, a label or an absolute-width path. */
  finish(cell: CellDef, ctx: ElementContext): void {
    const e = this.el;
    cell.elementCount++;
    if (e.kind === Rec.NODE) return; // electrical nodes have no mask geometry
    if (!e.hasXy) fail('missing-xy', `${recordName(e.kind)} element at byte ${e.offset} has no XY record`, e.offset);
    const xy = e.xy.data;
    const pts = e.xy.length >> 1;
    const needLayer = e.kind === Rec.BOUNDARY || e.kind === Rec.PATH || e.kind === Rec.BOX || e.kind === Rec.TEXT;
    if (needLayer && e.layer < 0) fail('bad-record', `${recordName(e.kind)} element at byte ${e.offset} has no LAYER record`, e.offset);
    switch (e.kind) {
      case Rec.BOUNDARY:
      case Rec.BOX: {
        let m = pts;
        if (m > 1 && xy[0] === xy[2 * m - 2] && xy[1] === xy[2 * m - 1]) m--;
        else if (m >= 3) {
          // The manual requires first = last. Close it implicitly (the ring is stored without the closing point
          // anyway) but say so: a designer should know the writer produced a malformed element.
          pushWarning(ctx.warnings, ctx.dropped, {
            code: 'unclosed-boundary',
            message: `${recordName(e.kind)} element at byte ${e.offset} is not closed (last point (${xy[2 * m - 2]}, ${xy[2 * m - 1]}) differs from the first (${xy[0]}, ${xy[1]})); closed implicitly`,
            offset: e.offset,
          });
        }
        if (m < 3) fail('bad-record', `${recordName(e.kind)} element at byte ${e.offset} has ${pts} points; a closed polygon needs at least 4`, e.offset);
        ctx.sink.ring(cell, e.layer, e.datatype, xy, 2 * m, e.offset);
        return;
      }
      case Rec.PATH: {
        if (e.pathtype !== 0 && e.pathtype !== 1 && e.pathtype !== 2 && e.pathtype !== 4) {
          fail('bad-record', `${recordName(e.kind)} element at byte ${e.offset} has unsupported PATHTYPE ${e.pathtype} (0, 1, 2 or 4 expected)`, e.offset);
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
        ctx.sink.ring(cell, e.layer, e.datatype, out, out.length, e.offset);
        return;
      }
      case Rec.TEXT:
        if (ctx.sink.keepLabels) cell.labels.push({ layer: e.layer, texttype: e.datatype, text: e.text, x: xy[0] as number, y: xy[1] as number });
        return;
      case Rec.SREF:
      case Rec.AREF: {
        const isA = e.kind === Rec.AREF;
        if (e.sname === null) fail('bad-record', `${recordName(e.kind)} element at byte ${e.offset} has no SNAME record`, e.offset);
        if (pts < (isA ? 3 : 1)) fail('bad-record', `${recordName(e.kind)} element at byte ${e.offset} has ${pts} XY points, ${isA ? 3 : 1} needed`, e.offset);
        if (isA && (e.cols < 1 || e.rows < 1)) fail('bad-record', `${recordName(e.kind)} element at byte ${e.offset} has COLROW ${e.cols}×${e.rows}; both must be at least 1`, e.offset);
        if (!(e.mag > 0) || !Number.isFinite(e.mag) || !Number.isFinite(e.angle)) fail('bad-record', `${recordName(e.kind)} element at byte ${e.offset} has MAG ${e.mag} and ANGLE ${e.angle}; MAG must be positive and both finite`, e.offset);
        const x = xy[0] as number;
        const y = xy[1] as number;
        const cols = isA ? e.cols : 1;
        const rows = isA ? e.rows : 1;
        cell.refs.push({
          child: ctx.cellIndexOf(e.sname, e.snameOffset), x, y,
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
