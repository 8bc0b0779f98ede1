/**
 * Synthetic inputs for the pipeline tests, built in code. The process model is invented for these tests (not a
 * real recipe); its numbers only need to make narrow trenches lag visibly.
 */
import type { FlatLayout, PolygonSet } from '@/lib/layout/types';
import { parseProcessModel, type ProcessModel } from '@/lib/etch';
import { GdsiiWriter } from '@/lib/layout/gdsii-writer';

export const DBU_UM = 0.001;
export const dbu = (um: number) => Math.round(um / DBU_UM);

export type RectUm = [number, number, number, number];

export function rectSet(layer: number, datatype: number, rects: RectUm[]): PolygonSet {
  const coords = new Float64Array(rects.length * 8);
  const offsets = new Uint32Array(rects.length + 1);
  rects.forEach(([x0, y0, x1, y1], k) => {
    coords.set([dbu(x0), dbu(y0), dbu(x1), dbu(y0), dbu(x1), dbu(y1), dbu(x0), dbu(y1)], k * 8);
    offsets[k + 1] = (k + 1) * 4;
  });
  return { layer, datatype, coords, offsets, count: rects.length };
}

/** 1 mm die outline on layer 0/0 and three 400 µm long trenches (2, 5, 20 µm wide) on layer 5/0. */
export const DIE_UM = 1000;
export const TRENCHES: RectUm[] = [
  [200, 300, 202, 700],
  [400, 300, 405, 700],
  [600, 300, 620, 700],
];

export function trenchLayout(trenches: RectUm[] = TRENCHES): FlatLayout {
  return {
    format: 'csv',
    libraryName: 'synthetic',
    dbuUm: DBU_UM,
    userUnitUm: 1,
    topCell: '',
    cellCount: 0,
    labels: [],
    layers: [rectSet(0, 0, [[0, 0, DIE_UM, DIE_UM]]), rectSet(5, 0, trenches)],
    bboxDbu: [0, 0, dbu(DIE_UM), dbu(DIE_UM)],
  };
}

/** Invented continuous deep-etch model: target 50 µm ± 2 µm in 15 min, no stop layer. */
export const TEST_MODEL_JSON = {
  name: 'pipeline test model',
  version: 't1',
  openRateUmPerMin: 4,
  reactionProbability: 0.2,
  loading: { coefficient: 0.3, lengthUm: 500 },
  etch: { timeMin: 15, targetDepthUm: 50, toleranceUm: 2, maxAspectRatio: 40 },
  mode: 'continuous',
} as const;

export function testModel(overrides: Record<string, unknown> = {}): ProcessModel {
  const r = parseProcessModel({ ...TEST_MODEL_JSON, ...overrides });
  if (!r.ok) throw new Error(`test model invalid: ${JSON.stringify(r.issues)}`);
  return r.model;
}

/** The same layout as a GDSII stream (for the check command). */
export function trenchGdsii(trenches: RectUm[] = TRENCHES): Uint8Array {
  const w = new GdsiiWriter({ libraryName: 'PIPETEST', dbuUm: DBU_UM });
  w.beginCell('TOP');
  w.rect(0, 0, 0, 0, dbu(DIE_UM), dbu(DIE_UM));
  for (const [x0, y0, x1, y1] of trenches) w.rect(5, 0, dbu(x0), dbu(y0), dbu(x1), dbu(y1));
  w.endCell();
  return w.finish();
}
