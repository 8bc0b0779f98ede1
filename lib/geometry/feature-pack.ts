/**
 * Features packed into one Float64Array (16 numbers each) for handing between threads: structured-cloning 10⁵–10⁶
 * objects costs more than measuring them.
 */
import type { Feature, FeatureKind } from './types';

const KINDS: FeatureKind[] = ['round-hole', 'square-hole', 'trench', 'open-field', 'irregular'];
export const PACKED_FEATURE_SIZE = 16;

export function packFeatures(fs: readonly Feature[]): Float64Array {
  const a = new Float64Array(fs.length * PACKED_FEATURE_SIZE);
  let o = 0;
  for (const f of fs) {
    a[o] = f.id;
    a[o + 1] = KINDS.indexOf(f.kind);
    a[o + 2] = f.centroidUm[0];
    a[o + 3] = f.centroidUm[1];
    a[o + 4] = f.bboxUm[0];
    a[o + 5] = f.bboxUm[1];
    a[o + 6] = f.bboxUm[2];
    a[o + 7] = f.bboxUm[3];
    a[o + 8] = f.areaUm2;
    a[o + 9] = f.perimeterUm;
    a[o + 10] = f.minWidthUm;
    a[o + 11] = f.maxWidthUm;
    a[o + 12] = f.lengthUm;
    a[o + 13] = f.widthStepUm;
    a[o + 14] = f.widthExact ? 1 : 0;
    a[o + 15] = f.pieces;
    o += PACKED_FEATURE_SIZE;
  }
  return a;
}

export function unpackFeatures(a: Float64Array): Feature[] {
  const out: Feature[] = new Array<Feature>(a.length / PACKED_FEATURE_SIZE);
  for (let k = 0, o = 0; o < a.length; k++, o += PACKED_FEATURE_SIZE) {
    out[k] = {
      id: a[o] as number,
      kind: KINDS[a[o + 1] as number] as FeatureKind,
      centroidUm: [a[o + 2] as number, a[o + 3] as number],
      bboxUm: [a[o + 4] as number, a[o + 5] as number, a[o + 6] as number, a[o + 7] as number],
      areaUm2: a[o + 8] as number,
      perimeterUm: a[o + 9] as number,
      minWidthUm: a[o + 10] as number,
      maxWidthUm: a[o + 11] as number,
      lengthUm: a[o + 12] as number,
      widthStepUm: a[o + 13] as number,
      widthExact: a[o + 14] === 1,
      pieces: a[o + 15] as number,
    };
  }
  return out;
}
