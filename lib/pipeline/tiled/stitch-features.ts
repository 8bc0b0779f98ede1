/**
 * Stitching the openings measured by the jobs of a tiled analysis into one list in the untiled id order. Kept in
 * one small module so it can move to column tables (FeatureTable) with the rest of the per-opening data.
 *
 * Untiled order (numberFeatures): bbox lower edge, left edge, centroid x, then extraction order — which is the
 * untiled union's piece order of each opening's first piece, i.e. its (lattice cell, rank) key from the job.
 */
import { emptyFeatureTable, featureColumns, concatFeatureTables, permuteFeatureTable, type FeatureTable } from '../../geometry/feature-table';

export interface FeaturePart {
  features: FeatureTable;
  /** (cell, rank) per feature. */
  keys: ArrayLike<number>;
}

/**
 * One table, ids 1..n in the untiled order. Empties `parts` once their rows are copied, so at most two copies of
 * the openings (≈ 110 bytes each) are alive at once.
 */
export function stitchFeatures(parts: FeaturePart[]): FeatureTable {
  let m = 0;
  for (const p of parts) m += p.features.count;
  const cell = new Float64Array(m), rank = new Float64Array(m);
  let k = 0;
  for (const p of parts) {
    for (let i = 0; i < p.features.count; i++, k++) {
      cell[k] = p.keys[2 * i] as number;
      rank[k] = p.keys[2 * i + 1] as number;
    }
  }
  const all = concatFeatureTables(parts.map((p) => p.features));
  parts.length = 0;
  const out = permuteFeatureTable(all, keyedOrder(all, cell, rank));
  for (let i = 0; i < m; i++) out.id[i] = i + 1;
  return out;
}

/**
 * Rows [0, t.count) in id order: bbox lower edge, left edge, centroid x, then (cell, rank). The spill's merge
 * (spill.ts) compares rows the same way.
 */
export function keyedOrder(t: FeatureTable, cell: ArrayLike<number>, rank: ArrayLike<number>): Uint32Array {
  const m = t.count;
  const idx = new Uint32Array(m);
  for (let i = 0; i < m; i++) idx[i] = i;
  const y0 = t.y0Um, x0 = t.x0Um, cx = t.centroidXUm;
  idx.sort((a, b) => (y0[a] as number) - (y0[b] as number) || (x0[a] as number) - (x0[b] as number) || (cx[a] as number) - (cx[b] as number) || (cell[a] as number) - (cell[b] as number) || (rank[a] as number) - (rank[b] as number));
  return idx;
}

/** Columns per feature in a packed part (every FeatureTable column) and the two key numbers after them. */
export const PACKED_COLUMNS = featureColumns(emptyFeatureTable(0)).length;

/**
 * Features and keys in one Float64Array for crossing a thread or queue boundary: the feature table's columns one
 * after the other (every column holds integers or float64, so the copy is exact), then the keys.
 */
export function packPart(part: FeaturePart): Float64Array {
  const n = part.features.count;
  const out = new Float64Array(n * PACKED_COLUMNS + part.keys.length);
  let o = 0;
  for (const col of featureColumns(part.features)) {
    out.set(col.subarray(0, n), o);
    o += n;
  }
  out.set(Array.from(part.keys), o);
  return out;
}

export function unpackPart(a: Float64Array): FeaturePart {
  const n = a.length / (PACKED_COLUMNS + 2);
  const t = emptyFeatureTable(n);
  t.count = n;
  let o = 0;
  for (const col of featureColumns(t)) {
    col.set(a.subarray(o, o + n));
    o += n;
  }
  return { features: t, keys: a.subarray(o) };
}
