/**
 * Compact binary of an analysis's per-opening columns for the browser ("TRFEAT1"): what the what-if worker and
 * the canvas need, nothing more. Little-endian; every column starts on an 8-byte boundary so the decoder can
 * return typed-array views without copying.
 *
 *   0  8  magic "TRFEAT1\0"
 *   8  4  uint32 count N
 *   12 4  uint32 column count C (= FEATURE_WIRE_COLUMNS.length; checked)
 *   16    columns in FEATURE_WIRE_COLUMNS order, N values each, zero-padded to a multiple of 8 bytes
 * Lengths and positions are float32 µm (display precision); the inputs and outputs of the etch model are float64
 * so a what-if at the stored settings reproduces the stored prediction.
 */

export const FEATURE_WIRE_MAGIC = 'TRFEAT1';

export const FEATURE_WIRE_COLUMNS = [
  ['featureId', 'i32'],
  ['modelKind', 'u8'],
  ['reachesTarget', 'u8'],
  ['xUm', 'f32'],
  ['yUm', 'f32'],
  ['x0Um', 'f32'],
  ['y0Um', 'f32'],
  ['x1Um', 'f32'],
  ['y1Um', 'f32'],
  ['areaUm2', 'f64'],
  ['widthUm', 'f64'],
  ['effectiveDensity', 'f64'],
  ['depthUm', 'f64'],
  ['aspectRatio', 'f64'],
  ['marginUm', 'f64'],
  ['overEtchUm', 'f64'],
] as const;

type ColumnName = (typeof FEATURE_WIRE_COLUMNS)[number][0];
type ArrayOf<T extends string> = T extends 'i32' ? Int32Array : T extends 'u8' ? Uint8Array : T extends 'f32' ? Float32Array : Float64Array;
export type WireFeatures = { count: number } & { [K in (typeof FEATURE_WIRE_COLUMNS)[number] as K[0]]: ArrayOf<K[1]> };

const SIZE = { i32: 4, u8: 1, f32: 4, f64: 8 } as const;
const pad8 = (n: number) => (n + 7) & ~7;

export class FeatureWireError extends Error {
  constructor(message: string, readonly offset: number) {
    super(message);
    this.name = 'FeatureWireError';
  }
}

/** Encodes columns (any numeric array-likes with at least `count` entries; e.g. lib/jobs FeatureColumns). */
export function encodeFeatures(c: { count: number } & Record<ColumnName, ArrayLike<number>>): Uint8Array {
  const n = c.count;
  let bytes = 16;
  for (const [, t] of FEATURE_WIRE_COLUMNS) bytes += pad8(n * SIZE[t]);
  const buf = new ArrayBuffer(bytes);
  const out = new Uint8Array(buf);
  for (let k = 0; k < FEATURE_WIRE_MAGIC.length; k++) out[k] = FEATURE_WIRE_MAGIC.charCodeAt(k);
  const dv = new DataView(buf);
  dv.setUint32(8, n, true);
  dv.setUint32(12, FEATURE_WIRE_COLUMNS.length, true);
  let off = 16;
  for (const [name, t] of FEATURE_WIRE_COLUMNS) {
    const src = c[name];
    const dst = t === 'i32' ? new Int32Array(buf, off, n) : t === 'u8' ? new Uint8Array(buf, off, n) : t === 'f32' ? new Float32Array(buf, off, n) : new Float64Array(buf, off, n);
    for (let i = 0; i < n; i++) dst[i] = src[i] as number;
    off += pad8(n * SIZE[t]);
  }
  return out;
}

/** Views over `bytes` (copied once if it is not 8-byte aligned). Throws FeatureWireError naming the byte offset. */
export function decodeFeatures(bytes: Uint8Array): WireFeatures {
  if (bytes.byteLength < 16) throw new FeatureWireError(`feature data truncated: ${bytes.byteLength} bytes, header needs 16`, bytes.byteLength);
  for (let k = 0; k < FEATURE_WIRE_MAGIC.length; k++) {
    if (bytes[k] !== FEATURE_WIRE_MAGIC.charCodeAt(k)) throw new FeatureWireError('not TRFEAT1 feature data (bad magic)', k);
  }
  const aligned = bytes.byteOffset % 8 === 0 ? bytes : bytes.slice();
  const dv = new DataView(aligned.buffer, aligned.byteOffset, aligned.byteLength);
  const n = dv.getUint32(8, true);
  const cols = dv.getUint32(12, true);
  if (cols !== FEATURE_WIRE_COLUMNS.length) throw new FeatureWireError(`feature data has ${cols} columns, this viewer reads ${FEATURE_WIRE_COLUMNS.length}`, 12);
  let off = 16;
  const out: Record<string, unknown> = { count: n };
  for (const [name, t] of FEATURE_WIRE_COLUMNS) {
    const len = pad8(n * SIZE[t]);
    if (off + len > aligned.byteLength) throw new FeatureWireError(`feature data truncated in column ${name}`, off);
    const at = aligned.byteOffset + off;
    out[name] = t === 'i32' ? new Int32Array(aligned.buffer, at, n) : t === 'u8' ? new Uint8Array(aligned.buffer, at, n) : t === 'f32' ? new Float32Array(aligned.buffer, at, n) : new Float64Array(aligned.buffer, at, n);
    off += len;
  }
  if (off !== aligned.byteLength) throw new FeatureWireError(`feature data has ${aligned.byteLength - off} trailing bytes`, off);
  return out as WireFeatures;
}
