/**
 * Per-opening results as one column file (`TRFEAT1`), written by the analysis worker and read by the server, so a
 * million openings cross from the worker to the server as a file instead of a structured-cloned array of objects.
 * Pure codec plus positional reads (node:fs only; no DB), so the worker bundle can include it.
 *
 * Layout, little-endian: magic "TRFEAT1\0"; uint32 header length H; H bytes of UTF-8 JSON
 * `{ count, columns: [{ name, dtype, offset }], tables: { offset, length } }`; zero padding; each column as a
 * packed array at its `offset` (from the start of the file, a multiple of 8); then at `tables.offset` the string
 * tables as UTF-8 JSON `{ shapes: string[], warnings: string[] }`. The header depends only on the count, so the
 * columns are written straight into the output buffer (one allocation for a million openings) and the string
 * tables, known only after the scan, go last. dtypes: f64, i32, u32, u8. `shape` and `warnings` are indices into
 * the string tables (warnings: the row's warnings joined by "; ", calibrated-range excursions appended as
 * "<quantity> outside the calibrated range", as the table stored them).
 * NaN numbers are stored as 0, like the analysis_features table did (SQLite REAL NOT NULL cannot hold NaN).
 */
import { closeSync, openSync, readSync } from 'node:fs';
import { FEATURE_KINDS } from '@/lib/geometry/feature-table';
import { excursionKeys, NULL_DEPTH_SIGMA, type FeatureResultTable } from '@/lib/pipeline/feature-results';
import type { FeatureResult } from '@/lib/pipeline/predict-features';

export const FEATURE_FILE_NAME = 'features.trfeat';
const MAGIC = 'TRFEAT1\0';

export const F64_COLUMNS = [
  'xUm',
  'yUm',
  'x0Um',
  'y0Um',
  'x1Um',
  'y1Um',
  'areaUm2',
  'widthUm',
  'lengthUm',
  'effectiveDensity',
  'depthUm',
  'aspectRatio',
  'marginUm',
  'overEtchUm',
  // NaN = no uncertainty estimate (uncalibrated model); 0 is a real value (an opening stopped on a stop layer).
  'depthSigmaUm',
] as const;
export type F64Column = (typeof F64_COLUMNS)[number];

type Dtype = 'f64' | 'i32' | 'u32' | 'u8';
const WIDTH: Record<Dtype, number> = { f64: 8, i32: 4, u32: 4, u8: 1 };
const COLUMN_TYPES: [string, Dtype][] = [
  ['featureId', 'i32'],
  ...F64_COLUMNS.map((c): [string, Dtype] => [c, 'f64']),
  ['shape', 'u8'],
  ['modelKind', 'u8'],
  ['reachesTarget', 'u8'],
  ['warnings', 'u32'],
];

export interface FeatureFileHeader {
  count: number;
  columns: { name: string; dtype: Dtype; offset: number }[];
  tables: { offset: number; length: number };
}

export interface FeatureFileTables {
  shapes: string[];
  warnings: string[];
}

/** Columns in memory (what the file holds, decoded). modelKind: 0 = trench, 1 = hole. */
export interface FeatureFileColumns extends Record<Exclude<F64Column, 'depthSigmaUm'>, Float64Array> {
  /** Absent in files written before uncertainty was stored. */
  depthSigmaUm?: Float64Array;
  count: number;
  featureId: Int32Array;
  shape: Uint8Array;
  modelKind: Uint8Array;
  reachesTarget: Uint8Array;
  warnings: Uint32Array;
  shapes: string[];
  warningTexts: string[];
}

const num = (v: number) => (Number.isNaN(v) ? 0 : v);
const align8 = (n: number) => (n + 7) & ~7;

function warningText(r: FeatureResult): string {
  if (r.warnings.length === 0 && r.excursions.length === 0) return '';
  return [...r.warnings, ...r.excursions.map((e) => `${e.quantity} outside the calibrated range`)].join('; ');
}

/** The encoded file in two parts: header + columns, then the string tables (write them in this order). */
export interface EncodedFeatureFile {
  body: Uint8Array;
  tables: Uint8Array;
  byteLength: number;
}

/** Header and column offsets for `n` rows; the columns end where the string tables begin. */
function layoutFor(n: number): { header: FeatureFileHeader; end: number } {
  const header: FeatureFileHeader = { count: n, columns: [], tables: { offset: 0, length: 0 } };
  // Offsets' digits change the header's length: size it with generous room (96 bytes per column entry).
  const room = align8(12 + JSON.stringify(header).length + 96 * COLUMN_TYPES.length + 64);
  let at = room;
  header.columns = COLUMN_TYPES.map(([name, dtype]) => {
    const col = { name, dtype, offset: at };
    at = align8(at + n * WIDTH[dtype]);
    return col;
  });
  header.tables.offset = at;
  return { header, end: at };
}

/** The columns of a new file for `n` rows, as views into its body (filled by the encoders below). */
function columnsFor(n: number) {
  const { header, end } = layoutFor(n);
  const body = new Uint8Array(end);
  const col = new Map(header.columns.map((c) => [c.name, c.offset]));
  const f64 = (name: string) => new Float64Array(body.buffer, col.get(name) as number, n);
  const cols = {
    xUm: f64('xUm'),
    yUm: f64('yUm'),
    x0Um: f64('x0Um'),
    y0Um: f64('y0Um'),
    x1Um: f64('x1Um'),
    y1Um: f64('y1Um'),
    areaUm2: f64('areaUm2'),
    widthUm: f64('widthUm'),
    lengthUm: f64('lengthUm'),
    effectiveDensity: f64('effectiveDensity'),
    depthUm: f64('depthUm'),
    aspectRatio: f64('aspectRatio'),
    marginUm: f64('marginUm'),
    overEtchUm: f64('overEtchUm'),
    depthSigmaUm: f64('depthSigmaUm'),
    featureId: new Int32Array(body.buffer, col.get('featureId') as number, n),
    shape: new Uint8Array(body.buffer, col.get('shape') as number, n),
    modelKind: new Uint8Array(body.buffer, col.get('modelKind') as number, n),
    reachesTarget: new Uint8Array(body.buffer, col.get('reachesTarget') as number, n),
    warnings: new Uint32Array(body.buffer, col.get('warnings') as number, n),
  };
  return { header, end, body, cols };
}

/** Header JSON and string tables written around the filled columns. */
function finishFile(header: FeatureFileHeader, end: number, body: Uint8Array, tableJson: FeatureFileTables): EncodedFeatureFile {
  const tables = new TextEncoder().encode(JSON.stringify(tableJson));
  header.tables.length = tables.length;
  const json = new TextEncoder().encode(JSON.stringify(header));
  const room = header.columns[0]?.offset ?? end;
  if (12 + json.length > room) throw new Error('feature file header outgrew its room');
  for (let i = 0; i < 8; i++) body[i] = MAGIC.charCodeAt(i);
  new DataView(body.buffer).setUint32(8, json.length, true);
  body.set(json, 12);
  return { body, tables, byteLength: body.length + tables.length };
}

/**
 * Encodes results (about 125 bytes per opening) with the columns written in place: a result table (what the
 * pipeline produces; column copies) or `FeatureResult` objects (tests, older callers). Same bytes for the same rows.
 */
export function encodeFeatureFile(results: FeatureResultTable | readonly FeatureResult[]): EncodedFeatureFile {
  return Array.isArray(results) ? encodeObjects(results as readonly FeatureResult[]) : encodeTable(results as FeatureResultTable);
}

function encodeObjects(results: readonly FeatureResult[]): EncodedFeatureFile {
  const n = results.length;
  const { header, end, body, cols: c } = columnsFor(n);
  const shapeIndex = new Map<string, number>();
  const warningIndex = new Map<string, number>([['', 0]]);
  for (let k = 0; k < n; k++) {
    const r = results[k] as FeatureResult;
    c.featureId[k] = r.id;
    c.xUm[k] = num(r.centroidUm[0]);
    c.yUm[k] = num(r.centroidUm[1]);
    c.x0Um[k] = num(r.bboxUm[0]);
    c.y0Um[k] = num(r.bboxUm[1]);
    c.x1Um[k] = num(r.bboxUm[2]);
    c.y1Um[k] = num(r.bboxUm[3]);
    c.areaUm2[k] = num(r.areaUm2);
    c.widthUm[k] = num(r.widthUm);
    c.lengthUm[k] = num(r.lengthUm);
    c.effectiveDensity[k] = num(r.effectiveDensity);
    c.depthUm[k] = num(r.depthUm);
    c.aspectRatio[k] = num(r.aspectRatio);
    c.marginUm[k] = num(r.marginUm);
    c.overEtchUm[k] = num(r.overEtchUm);
    c.depthSigmaUm[k] = r.depthSigmaUm ?? Number.NaN;
    let s = shapeIndex.get(r.shape);
    if (s === undefined) shapeIndex.set(r.shape, (s = shapeIndex.size));
    c.shape[k] = s;
    c.modelKind[k] = r.modelKind === 'hole' ? 1 : 0;
    c.reachesTarget[k] = r.reachesTarget ? 1 : 0;
    if (r.warnings.length === 0 && r.excursions.length === 0) continue; // warnings[k] = 0 (''), already zero
    const w = warningText(r);
    let wi = warningIndex.get(w);
    if (wi === undefined) warningIndex.set(w, (wi = warningIndex.size));
    c.warnings[k] = wi;
  }
  return finishFile(header, end, body, { shapes: [...shapeIndex.keys()], warnings: [...warningIndex.keys()] });
}

function encodeTable(t: FeatureResultTable): EncodedFeatureFile {
  const { header, end, body, cols } = columnsFor(t.count);
  const rows = new TableRowEncoder();
  rows.fill(t, cols);
  return finishFile(header, end, body, rows.tables());
}

/** The file's columns for some rows (views into a file body, or a chunk's own arrays). */
export type FeatureFileRowColumns = ReturnType<typeof columnsFor>['cols'];

/**
 * Result rows into file columns, with the shape and warning indices numbered in first-appearance order over all
 * rows filled so far (as encodeObjects numbers them): one encoder fills a whole file at once, or a streamed
 * writer's chunks in row order (feature-file-writer.ts) with the same indices.
 */
export class TableRowEncoder {
  private readonly shapeOf = new Int16Array(FEATURE_KINDS.length).fill(-1);
  private readonly shapes: string[] = [];
  private readonly warningIndex = new Map<string, number>([['', 0]]);
  private readonly rowText = new Map<number, number>(); // (note list, excursion bits) → warning index

  /** Rows [0, t.count) of `t` into rows [0, t.count) of `c`. */
  fill(t: FeatureResultTable, c: FeatureFileRowColumns): void {
    const n = t.count;
    const f = t.features;
    const copy = (dst: Float64Array, src: Float64Array) => {
      for (let k = 0; k < n; k++) dst[k] = num(src[k] as number);
    };
    copy(c.xUm, f.centroidXUm);
    copy(c.yUm, f.centroidYUm);
    copy(c.x0Um, f.x0Um);
    copy(c.y0Um, f.y0Um);
    copy(c.x1Um, f.x1Um);
    copy(c.y1Um, f.y1Um);
    copy(c.areaUm2, f.areaUm2);
    copy(c.widthUm, t.widthUm);
    copy(c.lengthUm, f.lengthUm);
    copy(c.effectiveDensity, t.effectiveDensity);
    copy(c.depthUm, t.depthUm);
    copy(c.aspectRatio, t.aspectRatio);
    copy(c.marginUm, t.marginUm);
    copy(c.overEtchUm, t.overEtchUm);
    c.modelKind.set(t.modelKind.subarray(0, n));
    c.reachesTarget.set(t.reachesTarget.subarray(0, n));
    const { shapeOf, shapes, warningIndex, rowText } = this;
    for (let k = 0; k < n; k++) {
      c.featureId[k] = f.id[k] as number;
      c.depthSigmaUm[k] = (t.nulls[k] as number) & NULL_DEPTH_SIGMA ? Number.NaN : (t.depthSigmaUm[k] as number);
      const kind = f.kind[k] as number;
      if (shapeOf[kind] === -1) {
        shapeOf[kind] = shapes.length;
        shapes.push(FEATURE_KINDS[kind] as string);
      }
      c.shape[k] = shapeOf[kind] as number;
      const li = t.notes[k] as number, bits = t.excursions[k] as number;
      if (li === 0 && bits === 0) {
        c.warnings[k] = 0;
        continue;
      }
      const key = li * 8 + bits;
      let wi = rowText.get(key);
      if (wi === undefined) {
        const w = [...(t.noteLists[li] as readonly string[]), ...excursionKeys(bits)].join('; ');
        wi = warningIndex.get(w);
        if (wi === undefined) warningIndex.set(w, (wi = warningIndex.size));
        rowText.set(key, wi);
      }
      c.warnings[k] = wi;
    }
  }

  tables(): FeatureFileTables {
    return { shapes: [...this.shapes], warnings: [...this.warningIndex.keys()] };
  }
}

/** Column offsets for `n` rows and where the string tables begin (for a writer that fills the file in place). */
export function featureFileLayout(n: number): { header: FeatureFileHeader; end: number } {
  return layoutFor(n);
}

/** Magic, length and header JSON (the file's first bytes; the columns start at the first column's offset). */
export function featureFileHead(header: FeatureFileHeader, tables: FeatureFileTables): { head: Uint8Array; tables: Uint8Array } {
  const room = header.columns[0]?.offset ?? 12;
  const body = new Uint8Array(room);
  const done = finishFile(header, room, body, tables);
  return { head: done.body, tables: done.tables };
}

/** Empty columns for `n` rows (a streamed writer's chunk). */
export function featureFileRowColumns(n: number): FeatureFileRowColumns {
  const f64 = () => new Float64Array(n);
  return {
    xUm: f64(), yUm: f64(), x0Um: f64(), y0Um: f64(), x1Um: f64(), y1Um: f64(), areaUm2: f64(), widthUm: f64(), lengthUm: f64(),
    effectiveDensity: f64(), depthUm: f64(), aspectRatio: f64(), marginUm: f64(), overEtchUm: f64(), depthSigmaUm: f64(),
    featureId: new Int32Array(n), shape: new Uint8Array(n), modelKind: new Uint8Array(n), reachesTarget: new Uint8Array(n), warnings: new Uint32Array(n),
  };
}

/** Both parts in one buffer (tests, small files). */
export function featureFileBytes(e: EncodedFeatureFile): Uint8Array {
  const out = new Uint8Array(e.byteLength);
  out.set(e.body);
  out.set(e.tables, e.body.length);
  return out;
}

export class FeatureFileError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'FeatureFileError';
  }
}

function parseHeader(bytes: Uint8Array, file: string): FeatureFileHeader {
  for (let i = 0; i < 8; i++) if (bytes[i] !== MAGIC.charCodeAt(i)) throw new FeatureFileError(`${file}: not a ${MAGIC.slice(0, 7)} file`);
  const len = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength).getUint32(8, true);
  if (12 + len > bytes.length) throw new FeatureFileError(`${file}: header runs past the end`);
  return JSON.parse(new TextDecoder().decode(bytes.subarray(12, 12 + len))) as FeatureFileHeader;
}

/** Reads the header and string tables of a feature file (three small positional reads). */
export function readFeatureFileHeader(fd: number, file: string): FeatureFileHeader & FeatureFileTables {
  const head = new Uint8Array(12);
  if (readSync(fd, head, 0, 12, 0) < 12) throw new FeatureFileError(`${file}: shorter than its header`);
  const len = new DataView(head.buffer).getUint32(8, true);
  if (len > 64 * 1024 * 1024) throw new FeatureFileError(`${file}: implausible header length ${len}`);
  const all = new Uint8Array(12 + len);
  if (readSync(fd, all, 0, all.length, 0) < all.length) throw new FeatureFileError(`${file}: header runs past the end`);
  const header = parseHeader(all, file);
  const t = new Uint8Array(header.tables.length);
  if (t.length > 0 && readSync(fd, t, 0, t.length, header.tables.offset) < t.length) throw new FeatureFileError(`${file}: string tables are truncated`);
  const tables = JSON.parse(new TextDecoder().decode(t)) as FeatureFileTables;
  return { ...header, ...tables };
}

function typed(dtype: Dtype, buf: ArrayBuffer, offset: number, n: number): Float64Array | Int32Array | Uint32Array | Uint8Array {
  if (dtype === 'f64') return new Float64Array(buf, offset, n);
  if (dtype === 'i32') return new Int32Array(buf, offset, n);
  if (dtype === 'u32') return new Uint32Array(buf, offset, n);
  return new Uint8Array(buf, offset, n);
}

/**
 * Rows [from, from + n) of every column (n clipped to the file), read with one positional read per column into
 * fresh aligned buffers. Reading the whole file is `readFeatureRange(file, 0, Infinity)`.
 */
export function readFeatureRange(file: string, from: number, n: number): FeatureFileColumns {
  const fd = openSync(file, 'r');
  try {
    const h = readFeatureFileHeader(fd, file);
    const start = Math.max(0, Math.min(from, h.count));
    const count = Math.max(0, Math.min(h.count - start, n));
    const out: Record<string, unknown> = { count, shapes: h.shapes, warningTexts: h.warnings };
    for (const c of h.columns) {
      const w = WIDTH[c.dtype];
      const buf = new ArrayBuffer(count * w);
      const want = count * w;
      if (want > 0) {
        let got = 0;
        const view = new Uint8Array(buf);
        while (got < want) {
          const r = readSync(fd, view, got, want - got, c.offset + start * w + got);
          if (r <= 0) throw new FeatureFileError(`${file}: column ${c.name} is truncated`);
          got += r;
        }
      }
      out[c.name] = typed(c.dtype, buf, 0, count);
    }
    return out as unknown as FeatureFileColumns;
  } finally {
    closeSync(fd);
  }
}
