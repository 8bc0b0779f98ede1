/**
 * Feature tables handed between threads: the columns' buffers are transferred (moved, not copied), so a shard of
 * 10⁵–10⁶ features crosses in constant time. `unpackFeatureTable` checks what arrived before the pipeline trusts it.
 */
import { FEATURE_F64_COLUMNS, type FeatureTable } from './feature-table';

/** The table and the buffers to put in postMessage's transfer list (its columns must not share a buffer). */
export function packFeatureTable(t: FeatureTable): { table: FeatureTable; transfer: ArrayBuffer[] } {
  const cols = [t.id, t.kind, t.widthExact, t.pieces, ...FEATURE_F64_COLUMNS.map((c) => t[c])];
  const buffers = new Set(cols.map((c) => c.buffer as ArrayBuffer));
  if (buffers.size !== cols.length) throw new Error('feature table columns share a buffer: trim it before transfer');
  return { table: t, transfer: [...buffers] };
}

/** The received table, or an error naming what is wrong with it. */
export function unpackFeatureTable(x: unknown): FeatureTable {
  const t = x as Partial<FeatureTable> | null;
  if (!t || typeof t.count !== 'number' || !Number.isInteger(t.count) || t.count < 0) throw new Error('feature table: bad count');
  const n = t.count;
  const check = (name: string, a: unknown, Ctor: Function) => {
    if (!(a instanceof Ctor) || (a as ArrayLike<number>).length < n) throw new Error(`feature table: column ${name} missing or short`);
  };
  check('id', t.id, Uint32Array);
  check('kind', t.kind, Uint8Array);
  check('widthExact', t.widthExact, Uint8Array);
  check('pieces', t.pieces, Uint32Array);
  for (const c of FEATURE_F64_COLUMNS) check(c, t[c], Float64Array);
  return t as FeatureTable;
}
