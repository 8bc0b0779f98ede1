/**
 * Stitching the openings measured by the jobs of a tiled analysis into one list in the untiled id order. Kept in
 * one small module so it can move to column tables (FeatureTable) with the rest of the per-opening data.
 *
 * Untiled order (numberFeatures): bbox lower edge, left edge, centroid x, then extraction order — which is the
 * untiled union's piece order of each opening's first piece, i.e. its (lattice cell, rank) key from the job.
 */
import type { Feature } from '../../geometry/types';
import { emptyFeatureTable, featureColumns, featureList, featureTableOf } from '../../geometry/feature-table';

export interface FeaturePart {
  features: Feature[];
  /** (cell, rank) per feature. */
  keys: ArrayLike<number>;
}

/** One list, ids 1..n in the untiled order. Mutates the features' ids. */
export function stitchFeatures(parts: readonly FeaturePart[]): Feature[] {
  let m = 0;
  for (const p of parts) m += p.features.length;
  const all: Feature[] = new Array<Feature>(m);
  const cell = new Float64Array(m), rank = new Float64Array(m);
  let k = 0;
  for (const p of parts) {
    p.features.forEach((f, i) => {
      all[k] = f;
      cell[k] = p.keys[2 * i] as number;
      rank[k] = p.keys[2 * i + 1] as number;
      k++;
    });
  }
  const idx = new Uint32Array(m);
  for (let i = 0; i < m; i++) idx[i] = i;
  idx.sort((a, b) => {
    const fa = all[a] as Feature, fb = all[b] as Feature;
    return fa.bboxUm[1] - fb.bboxUm[1] || fa.bboxUm[0] - fb.bboxUm[0] || fa.centroidUm[0] - fb.centroidUm[0] || (cell[a] as number) - (cell[b] as number) || (rank[a] as number) - (rank[b] as number);
  });
  const out: Feature[] = new Array<Feature>(m);
  for (let i = 0; i < m; i++) {
    const f = all[idx[i] as number] as Feature;
    f.id = i + 1;
    out[i] = f;
  }
  return out;
}

/** Columns per feature in a packed part (every FeatureTable column) and the two key numbers after them. */
const PACKED_COLUMNS = featureColumns(emptyFeatureTable(0)).length;

/**
 * Features and keys in one Float64Array for crossing a thread or queue boundary: the feature table's columns one
 * after the other (every column holds integers or float64, so the copy is exact), then the keys.
 */
export function packPart(part: FeaturePart): Float64Array {
  const n = part.features.length;
  const out = new Float64Array(n * PACKED_COLUMNS + part.keys.length);
  let o = 0;
  for (const col of featureColumns(featureTableOf(part.features))) {
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
  return { features: featureList(t), keys: a.subarray(o) };
}
