/**
 * Per-opening results as one column file (`TRFEAT1`), written by the analysis worker and read by the server, so a
 * million openings cross from the worker to the server as a file instead of a structured-cloned array of objects.
 * Pure codec plus positional reads (node:fs only; no DB), so the worker bundle can include it.
 *
 * Layout, little-endian: magic "TRFEAT1\0"; uint32 header length H; H bytes of UTF-8 JSON
 * `{ count, columns: [{ name, dtype, offset }], shapes: string[], warnings: string[] }`; zero padding; then each
 * column as a packed array at its `offset` (from the start of the file, a multiple of 8). dtypes: f64, i32, u32,
 * u8. `shape` and `warnings` are indices into the two string tables (warnings: the row's warnings joined by "; ",
 * calibrated-range excursions appended as "<quantity> outside the calibrated range", as the table stored them).
 * NaN numbers are stored as 0, like the analysis_features table did (SQLite REAL NOT NULL cannot hold NaN).
 */
import { closeSync, openSync, readSync } from 'node:fs';
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
  shapes: string[];
  warnings: string[];
}

/** Columns in memory (what the file holds, decoded). modelKind: 0 = trench, 1 = hole. */
export interface FeatureFileColumns extends Record<F64Column, Float64Array> {
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

/** Encodes results into one buffer (about 125 bytes per opening). */
export function encodeFeatureFile(results: FeatureResult[]): Uint8Array {
  const n = results.length;
  const f64 = Object.fromEntries(F64_COLUMNS.map((c) => [c, new Float64Array(n)])) as Record<F64Column, Float64Array>;
  const featureId = new Int32Array(n);
  const shape = new Uint8Array(n);
  const modelKind = new Uint8Array(n);
  const reachesTarget = new Uint8Array(n);
  const warnings = new Uint32Array(n);
  const shapeIndex = new Map<string, number>();
  const warningIndex = new Map<string, number>([['', 0]]);
  const { xUm, yUm, x0Um, y0Um, x1Um, y1Um, areaUm2, widthUm, lengthUm, effectiveDensity, depthUm, aspectRatio, marginUm, overEtchUm } = f64;
  for (let k = 0; k < n; k++) {
    const r = results[k] as FeatureResult;
    featureId[k] = r.id;
    xUm[k] = num(r.centroidUm[0]);
    yUm[k] = num(r.centroidUm[1]);
    x0Um[k] = num(r.bboxUm[0]);
    y0Um[k] = num(r.bboxUm[1]);
    x1Um[k] = num(r.bboxUm[2]);
    y1Um[k] = num(r.bboxUm[3]);
    areaUm2[k] = num(r.areaUm2);
    widthUm[k] = num(r.widthUm);
    lengthUm[k] = num(r.lengthUm);
    effectiveDensity[k] = num(r.effectiveDensity);
    depthUm[k] = num(r.depthUm);
    aspectRatio[k] = num(r.aspectRatio);
    marginUm[k] = num(r.marginUm);
    overEtchUm[k] = num(r.overEtchUm);
    let s = shapeIndex.get(r.shape);
    if (s === undefined) shapeIndex.set(r.shape, (s = shapeIndex.size));
    shape[k] = s;
    modelKind[k] = r.modelKind === 'hole' ? 1 : 0;
    reachesTarget[k] = r.reachesTarget ? 1 : 0;
    const w = warningText(r);
    let wi = warningIndex.get(w);
    if (wi === undefined) warningIndex.set(w, (wi = warningIndex.size));
    warnings[k] = wi;
  }
  const data: Record<string, ArrayBufferView> = { featureId, shape, modelKind, reachesTarget, warnings, ...f64 };
  const header: FeatureFileHeader = { count: n, columns: [], shapes: [...shapeIndex.keys()], warnings: [...warningIndex.keys()] };
  // Offsets depend on the header's length, which depends on the offsets' digits: size the header with room to spare.
  const draft = (start: number) => {
    let at = start;
    header.columns = COLUMN_TYPES.map(([name, dtype]) => {
      const col = { name, dtype, offset: at };
      at = align8(at + n * WIDTH[dtype]);
      return col;
    });
    return at;
  };
  draft(0);
  const json0 = new TextEncoder().encode(JSON.stringify(header));
  const dataStart = align8(8 + 4 + json0.length + 16 * COLUMN_TYPES.length);
  const total = draft(dataStart);
  const json = new TextEncoder().encode(JSON.stringify(header));
  if (12 + json.length > dataStart) throw new Error('feature file header outgrew its room');
  const out = new Uint8Array(total);
  for (let i = 0; i < 8; i++) out[i] = MAGIC.charCodeAt(i);
  new DataView(out.buffer).setUint32(8, json.length, true);
  out.set(json, 12);
  for (const c of header.columns) {
    const v = data[c.name] as ArrayBufferView;
    out.set(new Uint8Array(v.buffer, v.byteOffset, v.byteLength), c.offset);
  }
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

/** Reads the header of a feature file (two small positional reads). */
export function readFeatureFileHeader(fd: number, file: string): FeatureFileHeader {
  const head = new Uint8Array(12);
  if (readSync(fd, head, 0, 12, 0) < 12) throw new FeatureFileError(`${file}: shorter than its header`);
  const len = new DataView(head.buffer).getUint32(8, true);
  if (len > 64 * 1024 * 1024) throw new FeatureFileError(`${file}: implausible header length ${len}`);
  const all = new Uint8Array(12 + len);
  if (readSync(fd, all, 0, all.length, 0) < all.length) throw new FeatureFileError(`${file}: header runs past the end`);
  return parseHeader(all, file);
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
