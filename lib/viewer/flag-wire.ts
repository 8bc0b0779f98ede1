/**
 * Every flag of an analysis as compact binary columns for the canvas ("TRFLAG1"): the JSON flags API pages at
 * 5,000, and a million-polygon layout can carry far more flags than that. Messages stay out (they are ~100 bytes
 * each); the viewer fetches one on hover from the JSON API at the flag's position in rank order.
 * Little-endian; columns start on 8-byte boundaries so the decoder returns views without copying.
 *
 *   0  8  magic "TRFLAG1\0"
 *   8  4  uint32 count N
 *   12 4  uint32 byte length S of the UTF-8 JSON string table {kinds, units, keys}
 *   16 S  string table, zero-padded to a multiple of 8
 *      then columns in FLAG_WIRE_COLUMNS order, N values each, zero-padded to a multiple of 8 bytes
 * Flags are in rank order (worst first), so index i is offset i of GET /analyses/{id}/flags.
 */

export const FLAG_WIRE_MAGIC = 'TRFLAG1';
export const SEVERITY_CODES = ['error', 'warning', 'info'] as const;
export type SeverityName = (typeof SEVERITY_CODES)[number];

export const FLAG_WIRE_COLUMNS = [
  ['xUm', 'f32'],
  ['yUm', 'f32'],
  ['x0Um', 'f32'],
  ['y0Um', 'f32'],
  ['x1Um', 'f32'],
  ['y1Um', 'f32'],
  ['measured', 'f32'],
  ['limit', 'f32'],
  ['kind', 'u8'],
  ['severity', 'u8'],
  ['unit', 'u8'],
] as const;

type ColumnName = (typeof FLAG_WIRE_COLUMNS)[number][0];
type ArrayOf<T extends string> = T extends 'u8' ? Uint8Array : Float32Array;
export type FlagColumns = { count: number; kinds: string[]; units: string[]; keys: string[] } & { [K in (typeof FLAG_WIRE_COLUMNS)[number] as K[0]]: ArrayOf<K[1]> };

/** One flag as the encoder takes it (the DB row shape, loosely). */
export type FlagRecord = { key: string; kind: string; severity: string; xUm: number; yUm: number; bboxUm: readonly [number, number, number, number]; measured: number; limit: number; unit: string };

const SIZE = { u8: 1, f32: 4 } as const;
const pad8 = (n: number) => (n + 7) & ~7;

export class FlagWireError extends Error {
  constructor(message: string, readonly offset: number) {
    super(message);
    this.name = 'FlagWireError';
  }
}

function tableIndex(list: string[], map: Map<string, number>, value: string): number {
  let k = map.get(value);
  if (k === undefined) {
    if (list.length >= 255) throw new FlagWireError(`more than 255 distinct flag kinds or units (at "${value}")`, 0);
    k = list.length;
    list.push(value);
    map.set(value, k);
  }
  return k;
}

/** Columns from records, in the order given. Unknown severities read as info. */
export function flagColumns(records: Iterable<FlagRecord>): FlagColumns {
  const rows = Array.isArray(records) ? (records as FlagRecord[]) : [...records];
  const n = rows.length;
  const f = () => new Float32Array(n);
  const c: FlagColumns = { count: n, kinds: [], units: [], keys: new Array<string>(n), xUm: f(), yUm: f(), x0Um: f(), y0Um: f(), x1Um: f(), y1Um: f(), measured: f(), limit: f(), kind: new Uint8Array(n), severity: new Uint8Array(n), unit: new Uint8Array(n) };
  const kindMap = new Map<string, number>();
  const unitMap = new Map<string, number>();
  rows.forEach((r, i) => {
    c.keys[i] = r.key;
    c.xUm[i] = r.xUm;
    c.yUm[i] = r.yUm;
    [c.x0Um[i], c.y0Um[i], c.x1Um[i], c.y1Um[i]] = r.bboxUm;
    c.measured[i] = r.measured;
    c.limit[i] = r.limit;
    c.kind[i] = tableIndex(c.kinds, kindMap, r.kind);
    c.unit[i] = tableIndex(c.units, unitMap, r.unit);
    const s = SEVERITY_CODES.indexOf(r.severity as SeverityName);
    c.severity[i] = s < 0 ? 2 : s;
  });
  return c;
}

/** Flag i back as a record. */
export function flagAt(c: FlagColumns, i: number): FlagRecord & { severity: SeverityName } {
  return {
    key: c.keys[i] ?? '',
    kind: c.kinds[c.kind[i] ?? 0] ?? '',
    severity: SEVERITY_CODES[c.severity[i] ?? 2] ?? 'info',
    xUm: c.xUm[i] ?? 0,
    yUm: c.yUm[i] ?? 0,
    bboxUm: [c.x0Um[i] ?? 0, c.y0Um[i] ?? 0, c.x1Um[i] ?? 0, c.y1Um[i] ?? 0],
    measured: c.measured[i] ?? 0,
    limit: c.limit[i] ?? 0,
    unit: c.units[c.unit[i] ?? 0] ?? '',
  };
}

/** The flags at `indices` of `c`, followed by all of `extra` (e.g. stored density flags + what-if opening flags). */
export function selectAndAppend(c: FlagColumns, indices: ArrayLike<number>, extra: FlagRecord[]): FlagColumns {
  const records: FlagRecord[] = [];
  for (let k = 0; k < indices.length; k++) records.push(flagAt(c, indices[k] as number));
  return flagColumns(records.concat(extra));
}

export function encodeFlags(c: FlagColumns): Uint8Array {
  const n = c.count;
  const table = new TextEncoder().encode(JSON.stringify({ kinds: c.kinds, units: c.units, keys: c.keys.slice(0, n) }));
  let bytes = 16 + pad8(table.byteLength);
  for (const [, t] of FLAG_WIRE_COLUMNS) bytes += pad8(n * SIZE[t]);
  const buf = new ArrayBuffer(bytes);
  const out = new Uint8Array(buf);
  for (let k = 0; k < FLAG_WIRE_MAGIC.length; k++) out[k] = FLAG_WIRE_MAGIC.charCodeAt(k);
  const dv = new DataView(buf);
  dv.setUint32(8, n, true);
  dv.setUint32(12, table.byteLength, true);
  out.set(table, 16);
  let off = 16 + pad8(table.byteLength);
  for (const [name, t] of FLAG_WIRE_COLUMNS) {
    const src = c[name as ColumnName];
    if (t === 'u8') out.set(src.subarray(0, n) as Uint8Array, off);
    else new Float32Array(buf, off, n).set((src as Float32Array).subarray(0, n));
    off += pad8(n * SIZE[t]);
  }
  return out;
}

export function decodeFlags(bytes: Uint8Array): FlagColumns {
  if (bytes.byteLength < 16) throw new FlagWireError(`flag data is ${bytes.byteLength} bytes, shorter than its 16-byte header`, 0);
  for (let k = 0; k < FLAG_WIRE_MAGIC.length; k++) if (bytes[k] !== FLAG_WIRE_MAGIC.charCodeAt(k)) throw new FlagWireError('not TRFLAG1 data (bad magic)', k);
  // Columns are read as views: copy when the bytes do not start on an 8-byte boundary of their buffer.
  const b = bytes.byteOffset % 8 === 0 ? bytes : bytes.slice();
  const dv = new DataView(b.buffer, b.byteOffset, b.byteLength);
  const n = dv.getUint32(8, true);
  const s = dv.getUint32(12, true);
  if (16 + s > b.byteLength) throw new FlagWireError(`string table of ${s} bytes runs past the end (${b.byteLength} bytes)`, 12);
  let table: { kinds: string[]; units: string[]; keys: string[] };
  try {
    table = JSON.parse(new TextDecoder().decode(b.subarray(16, 16 + s))) as typeof table;
  } catch {
    throw new FlagWireError('string table is not valid JSON', 16);
  }
  if (!Array.isArray(table.keys) || table.keys.length !== n) throw new FlagWireError(`string table has ${table.keys?.length ?? 'no'} keys for ${n} flags`, 16);
  let off = 16 + pad8(s);
  const cols: Record<string, Uint8Array | Float32Array> = {};
  for (const [name, t] of FLAG_WIRE_COLUMNS) {
    const len = pad8(n * SIZE[t]);
    if (off + len > b.byteLength) throw new FlagWireError(`column ${name} runs past the end of the data (${b.byteLength} bytes)`, off);
    cols[name] = t === 'u8' ? new Uint8Array(b.buffer, b.byteOffset + off, n) : new Float32Array(b.buffer, b.byteOffset + off, n);
    off += len;
  }
  return { count: n, kinds: table.kinds, units: table.units, keys: table.keys, ...(cols as Omit<FlagColumns, 'count' | 'kinds' | 'units' | 'keys'>) };
}
