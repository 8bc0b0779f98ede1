/**
 * Trenchant result-map file ("TRGRID1"): one float32 raster with its geometry, kind and unit. Our own format,
 * little-endian throughout, so the viewer can fetch a map and view its samples without parsing text.
 *
 * Layout (byte offsets):
 *   0   8  magic: ASCII "TRGRID1" followed by one 0x00 byte
 *   8   4  uint32 dataOffset — byte offset of the first sample (multiple of 8; header + padding)
 *   12  4  uint32 nx
 *   16  4  uint32 ny
 *   20  4  uint32 dtype — 1 = float32 (the only one so far)
 *   24  8  float64 x0Um    (lower-left corner of pixel (0,0), µm)
 *   32  8  float64 y0Um
 *   40  8  float64 pixelUm (square pixels)
 *   48  2  uint16 K, then K bytes: kind, UTF-8 (one of GRID_KINDS)
 *   ..  2  uint16 U, then U bytes: unit, UTF-8 ("fraction", "um", "ratio", "score")
 *   ..  4  uint32 M, then M bytes: metadata, a UTF-8 JSON object ("{}" when none), e.g. {"windowUm":700,"stepUm":70}
 *   ..     zero padding up to dataOffset
 *   dataOffset: nx·ny float32 samples, row-major (index j·nx + i, j along +y); NaN = no value at that pixel.
 * Pixel (i,j) covers [x0 + i·p, x0 + (i+1)·p] × [y0 + j·p, y0 + (j+1)·p] (the geometry engine's Grid convention).
 * The file must end exactly after the last sample.
 *
 * Pure module (no Node imports); see grid-file-node.ts for reading and writing files.
 */

export const GRID_MAGIC = 'TRGRID1';
export const GRID_DTYPE_FLOAT32 = 1;
const FIXED_HEADER = 48;
/** Refuse absurd sizes before allocating (2^28 samples = 1 GiB of float32). */
export const GRID_MAX_SAMPLES = 2 ** 28;

export const GRID_KINDS = [
  'coverage',
  'window-density',
  'effective-density',
  'local-width',
  'aspect-ratio',
  'predicted-depth',
  'risk',
  'depth-uncertainty',
] as const;
export type GridKind = (typeof GRID_KINDS)[number];
export type GridUnit = 'fraction' | 'um' | 'ratio' | 'score';

export interface GridGeometry {
  x0Um: number;
  y0Um: number;
  pixelUm: number;
  nx: number;
  ny: number;
}

export interface GridMap {
  kind: GridKind;
  unit: GridUnit;
  grid: GridGeometry;
  /** JSON-safe extras (window size/step for window density, NaN meaning, model name...). */
  meta: Record<string, unknown>;
  values: Float32Array;
}

export class GridFileError extends Error {
  constructor(
    readonly code: 'bad-magic' | 'truncated' | 'trailing-bytes' | 'bad-header' | 'bad-dtype' | 'bad-kind' | 'too-large',
    message: string,
    readonly offset?: number,
  ) {
    super(message);
    this.name = 'GridFileError';
  }
}

const UNITS: readonly GridUnit[] = ['fraction', 'um', 'ratio', 'score'];
const encoder = new TextEncoder();
const decoder = new TextDecoder('utf-8', { fatal: true });

function checkGeometry(g: GridGeometry): void {
  if (!Number.isInteger(g.nx) || !Number.isInteger(g.ny) || g.nx < 1 || g.ny < 1) throw new RangeError(`grid size must be positive integers, got ${g.nx}×${g.ny}`);
  if (!(g.pixelUm > 0) || !Number.isFinite(g.pixelUm)) throw new RangeError(`pixelUm must be > 0, got ${g.pixelUm}`);
  if (!Number.isFinite(g.x0Um) || !Number.isFinite(g.y0Um)) throw new RangeError('grid origin must be finite');
}

/** Encode a map; throws RangeError when values.length ≠ nx·ny or the geometry is invalid. */
export function encodeGrid(map: GridMap): Uint8Array {
  const { grid } = map;
  checkGeometry(grid);
  if (map.values.length !== grid.nx * grid.ny) throw new RangeError(`values has ${map.values.length} samples, grid needs ${grid.nx * grid.ny}`);
  const kind = encoder.encode(map.kind);
  const unit = encoder.encode(map.unit);
  const meta = encoder.encode(JSON.stringify(map.meta ?? {}));
  const headerEnd = FIXED_HEADER + 2 + kind.length + 2 + unit.length + 4 + meta.length;
  const dataOffset = Math.ceil(headerEnd / 8) * 8;
  const out = new Uint8Array(dataOffset + 4 * map.values.length);
  const dv = new DataView(out.buffer);
  out.set(encoder.encode(GRID_MAGIC), 0); // byte 7 stays 0
  dv.setUint32(8, dataOffset, true);
  dv.setUint32(12, grid.nx, true);
  dv.setUint32(16, grid.ny, true);
  dv.setUint32(20, GRID_DTYPE_FLOAT32, true);
  dv.setFloat64(24, grid.x0Um, true);
  dv.setFloat64(32, grid.y0Um, true);
  dv.setFloat64(40, grid.pixelUm, true);
  let o = FIXED_HEADER;
  dv.setUint16(o, kind.length, true); out.set(kind, o + 2); o += 2 + kind.length;
  dv.setUint16(o, unit.length, true); out.set(unit, o + 2); o += 2 + unit.length;
  dv.setUint32(o, meta.length, true); out.set(meta, o + 4);
  const samples = new Float32Array(out.buffer, dataOffset, map.values.length);
  if (isLittleEndianHost) samples.set(map.values);
  else for (let k = 0; k < map.values.length; k++) dv.setFloat32(dataOffset + 4 * k, map.values[k] as number, true);
  return out;
}

const isLittleEndianHost = new Uint8Array(new Uint16Array([1]).buffer)[0] === 1;

/**
 * Decode a map. Every problem throws GridFileError with a one-line message naming the byte offset. The returned
 * values are a copy (safe to keep when the input buffer is reused).
 */
export function decodeGrid(bytes: Uint8Array): GridMap {
  if (bytes.length < FIXED_HEADER + 8) throw new GridFileError('truncated', `grid file too short: ${bytes.length} bytes, header needs at least ${FIXED_HEADER + 8}`, bytes.length);
  const dv = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  const magic = String.fromCharCode(...bytes.subarray(0, 7));
  if (magic !== GRID_MAGIC || bytes[7] !== 0) throw new GridFileError('bad-magic', `not a Trenchant grid file: expected magic "${GRID_MAGIC}" at byte 0`, 0);
  const dataOffset = dv.getUint32(8, true);
  const nx = dv.getUint32(12, true);
  const ny = dv.getUint32(16, true);
  const dtype = dv.getUint32(20, true);
  const x0Um = dv.getFloat64(24, true);
  const y0Um = dv.getFloat64(32, true);
  const pixelUm = dv.getFloat64(40, true);
  if (dtype !== GRID_DTYPE_FLOAT32) throw new GridFileError('bad-dtype', `unsupported sample type ${dtype} at byte 20 (only 1 = float32)`, 20);
  if (nx < 1 || ny < 1) throw new GridFileError('bad-header', `grid size ${nx}×${ny} at byte 12 must be at least 1×1`, 12);
  if (nx * ny > GRID_MAX_SAMPLES) throw new GridFileError('too-large', `grid size ${nx}×${ny} at byte 12 exceeds ${GRID_MAX_SAMPLES} samples`, 12);
  if (!Number.isFinite(x0Um) || !Number.isFinite(y0Um)) throw new GridFileError('bad-header', 'grid origin at byte 24 is not finite', 24);
  if (!(pixelUm > 0) || !Number.isFinite(pixelUm)) throw new GridFileError('bad-header', `pixel size ${pixelUm} at byte 40 must be > 0`, 40);

  let o = FIXED_HEADER;
  const readString = (lenBytes: 2 | 4, what: string): string => {
    if (o + lenBytes > bytes.length) throw new GridFileError('truncated', `grid file ends inside the ${what} length at byte ${o}`, o);
    const len = lenBytes === 2 ? dv.getUint16(o, true) : dv.getUint32(o, true);
    const start = o + lenBytes;
    if (start + len > bytes.length) throw new GridFileError('truncated', `grid file ends inside the ${what} (${len} bytes from byte ${start})`, start);
    if (start + len > dataOffset) throw new GridFileError('bad-header', `${what} at byte ${start} runs past the data offset ${dataOffset}`, start);
    o = start + len;
    try {
      return decoder.decode(bytes.subarray(start, start + len));
    } catch {
      throw new GridFileError('bad-header', `${what} at byte ${start} is not valid UTF-8`, start);
    }
  };
  const kind = readString(2, 'kind');
  if (!(GRID_KINDS as readonly string[]).includes(kind)) throw new GridFileError('bad-kind', `unknown map kind "${kind}" at byte ${FIXED_HEADER + 2}`, FIXED_HEADER + 2);
  const unitOffset = o + 2;
  const unit = readString(2, 'unit');
  if (!(UNITS as readonly string[]).includes(unit)) throw new GridFileError('bad-header', `unknown unit "${unit}" at byte ${unitOffset}`, unitOffset);
  const metaOffset = o + 4;
  const metaText = readString(4, 'metadata');
  let meta: unknown;
  try {
    meta = JSON.parse(metaText);
  } catch {
    throw new GridFileError('bad-header', `metadata at byte ${metaOffset} is not valid JSON`, metaOffset);
  }
  if (meta === null || typeof meta !== 'object' || Array.isArray(meta)) throw new GridFileError('bad-header', `metadata at byte ${metaOffset} must be a JSON object`, metaOffset);
  if (dataOffset % 4 !== 0) throw new GridFileError('bad-header', `data offset ${dataOffset} at byte 8 is not a multiple of 4`, 8);

  const expected = dataOffset + 4 * nx * ny;
  if (bytes.length < expected) throw new GridFileError('truncated', `grid file truncated: ${bytes.length} bytes, ${nx}×${ny} float32 samples need ${expected}`, bytes.length);
  if (bytes.length > expected) throw new GridFileError('trailing-bytes', `grid file has ${bytes.length - expected} unexpected bytes after the last sample at byte ${expected}`, expected);

  const values = new Float32Array(nx * ny);
  if (isLittleEndianHost && (bytes.byteOffset + dataOffset) % 4 === 0) {
    values.set(new Float32Array(bytes.buffer, bytes.byteOffset + dataOffset, nx * ny));
  } else {
    for (let k = 0; k < values.length; k++) values[k] = dv.getFloat32(dataOffset + 4 * k, true);
  }
  return { kind: kind as GridKind, unit: unit as GridUnit, grid: { x0Um, y0Um, pixelUm, nx, ny }, meta: meta as Record<string, unknown>, values };
}
