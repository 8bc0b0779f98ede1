/**
 * Binary answer of the polygons-in-view endpoint ("TRPOLY1"), little-endian:
 *
 *   0  8  magic "TRPOLY1\0"
 *   8  4  uint32 total — polygons whose bounding box meets the asked box (exact when `returned` > 0 or total = 0,
 *         otherwise an upper estimate from the count grid)
 *   12 4  uint32 returned R — 0 when total > the asked maximum (the client then draws the coverage raster)
 *   16 4  uint32 layer count L
 *   20 4  uint32 point count P
 *   24 8  float64 originX µm   (coordinates below are float32 offsets from this origin, for precision)
 *   32 8  float64 originY µm
 *   40    L × (int32 layer, int32 datatype)
 *   ..    R × uint32 layer index (into the list above)
 *   ..    (R + 1) × uint32 point offsets (polygon r owns points [off[r], off[r+1]))
 *   ..    2P × float32 x, y (µm from the origin)
 */

export const POLY_WIRE_MAGIC = 'TRPOLY1';
const HEADER = 40;

export interface WirePolygons {
  total: number;
  layers: { layer: number; datatype: number }[];
  originX: number;
  originY: number;
  polyLayer: Uint32Array;
  offsets: Uint32Array;
  coords: Float32Array;
}

export class PolygonWireError extends Error {
  constructor(message: string, readonly offset: number) {
    super(message);
    this.name = 'PolygonWireError';
  }
}

export function encodePolygons(p: WirePolygons): Uint8Array {
  const r = p.polyLayer.length;
  const pts = p.coords.length / 2;
  const bytes = HEADER + 8 * p.layers.length + 4 * r + 4 * (r + 1) + 8 * pts;
  const buf = new ArrayBuffer(bytes);
  const u8 = new Uint8Array(buf);
  for (let k = 0; k < POLY_WIRE_MAGIC.length; k++) u8[k] = POLY_WIRE_MAGIC.charCodeAt(k);
  const dv = new DataView(buf);
  dv.setUint32(8, p.total, true);
  dv.setUint32(12, r, true);
  dv.setUint32(16, p.layers.length, true);
  dv.setUint32(20, pts, true);
  dv.setFloat64(24, p.originX, true);
  dv.setFloat64(32, p.originY, true);
  let off = HEADER;
  for (const l of p.layers) {
    dv.setInt32(off, l.layer, true);
    dv.setInt32(off + 4, l.datatype, true);
    off += 8;
  }
  new Uint32Array(buf, off, r).set(p.polyLayer);
  off += 4 * r;
  new Uint32Array(buf, off, r + 1).set(r > 0 ? p.offsets : [0]);
  off += 4 * (r + 1);
  new Float32Array(buf, off, 2 * pts).set(p.coords);
  return u8;
}

export function decodePolygons(bytes: Uint8Array): WirePolygons {
  if (bytes.byteLength < HEADER) throw new PolygonWireError(`polygon data truncated: ${bytes.byteLength} bytes, header needs ${HEADER}`, bytes.byteLength);
  for (let k = 0; k < POLY_WIRE_MAGIC.length; k++) if (bytes[k] !== POLY_WIRE_MAGIC.charCodeAt(k)) throw new PolygonWireError('not TRPOLY1 polygon data (bad magic)', k);
  const b = bytes.byteOffset % 8 === 0 ? bytes : bytes.slice();
  const dv = new DataView(b.buffer, b.byteOffset, b.byteLength);
  const total = dv.getUint32(8, true);
  const r = dv.getUint32(12, true);
  const nl = dv.getUint32(16, true);
  const pts = dv.getUint32(20, true);
  const need = HEADER + 8 * nl + 8 * r + 4 + 8 * pts;
  if (need !== b.byteLength) throw new PolygonWireError(`polygon data is ${b.byteLength} bytes, its header says ${need}`, HEADER);
  let off = HEADER;
  const layers: WirePolygons['layers'] = [];
  for (let k = 0; k < nl; k++, off += 8) layers.push({ layer: dv.getInt32(off, true), datatype: dv.getInt32(off + 4, true) });
  const polyLayer = new Uint32Array(b.buffer, b.byteOffset + off, r);
  off += 4 * r;
  const offsets = new Uint32Array(b.buffer, b.byteOffset + off, r + 1);
  off += 4 * (r + 1);
  const coords = new Float32Array(b.buffer, b.byteOffset + off, 2 * pts);
  return { total, layers, originX: dv.getFloat64(24, true), originY: dv.getFloat64(32, true), polyLayer, offsets, coords };
}
