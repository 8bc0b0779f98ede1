/**
 * Worker for the geometry benchmark's sharded feature stage: measures one shard of the features of the
 * `OpenRegions` it is sent (lib/geometry stays free of threads; the caller shards, see FeatureOptions.shard) and
 * returns them packed in one transferable Float64Array (structured-cloning 10⁵–10⁶ objects costs more than the work).
 */
import { parentPort } from 'node:worker_threads';
import { featuresFromRegions, type Feature, type OpenRegions } from '../lib/geometry';

export const KINDS: Feature['kind'][] = ['round-hole', 'square-hole', 'trench', 'open-field', 'irregular'];
export const PACKED = 16;

export function unpackFeatures(a: Float64Array): Feature[] {
  const out: Feature[] = new Array<Feature>(a.length / PACKED);
  for (let k = 0, o = 0; o < a.length; k++, o += PACKED) {
    out[k] = {
      id: 0,
      kind: KINDS[a[o + 1] as number] as Feature['kind'],
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

parentPort?.on('message', (msg: { regions: OpenRegions; index: number; count: number }) => {
  const fs = featuresFromRegions(msg.regions, { shard: { index: msg.index, count: msg.count } });
  const a = new Float64Array(fs.length * PACKED);
  fs.forEach((f, k) => {
    a.set([f.id, KINDS.indexOf(f.kind), ...f.centroidUm, ...f.bboxUm, f.areaUm2, f.perimeterUm, f.minWidthUm, f.maxWidthUm, f.lengthUm, f.widthStepUm, f.widthExact ? 1 : 0, f.pieces], k * PACKED);
  });
  parentPort?.postMessage(a, [a.buffer]);
});
