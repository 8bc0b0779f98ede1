/**
 * The whole analysis with its helper thread (union tiles, coverage raster, features, predictions split between two
 * threads) against the same analysis on one thread (`helper: null`, the existing exact path and the reference):
 * summary, flags, every map value and every per-opening column must be identical. The layout is the seeded etch
 * layer of the benchmarks (bench/geometry-layout.ts) at 260 × 260 sites: 67 600 polygons, enough for every stage
 * to use the helper; holes, crossing trenches, 24-gons and open fields.
 */
import { describe, expect, it } from 'vitest';
import { parseProcessModel } from '@/lib/etch';
import type { FlatLayout } from '@/lib/layout/types';
import { runAnalysis, type AnalysisResult } from '@/lib/pipeline/run-analysis';
import { analysisSettingsSchema } from '@/lib/pipeline/settings';
import { benchLayout, BENCH_MODEL } from '../../bench/geometry-layout';

function layout(): FlatLayout {
  const set = benchLayout(260, 77);
  const side = 260 * 10_000;
  return { format: 'gdsii', libraryName: 'LARKSPUR_KESTREL3_SLICE', dbuUm: 0.001, userUnitUm: 1, topCell: 'TOP', cellCount: 1, labels: [], layers: [set], bboxDbu: [0, 0, side, side] };
}

function plain(r: AnalysisResult) {
  const { timingsMs: _t, ...summary } = r.summary;
  const cols = (o: object) => Object.fromEntries(Object.entries(o).map(([k, v]) => [k, ArrayBuffer.isView(v) ? Array.from(v as unknown as ArrayLike<number>) : v]));
  const { features, ...results } = r.featureTable;
  return { summary, flags: r.flags, maps: r.maps.map((m) => ({ ...m, values: Array.from(m.values) })), results: cols(results), features: cols(features) };
}

describe('runAnalysis with its helper thread', () => {
  it('gives exactly the one-thread result on 67 600 polygons', () => {
    const m = parseProcessModel(BENCH_MODEL);
    if (!m.ok) throw new Error('model');
    const settings = analysisSettingsSchema.parse({ etchLayers: [{ layer: 1, datatype: 0 }], pixel: { sizeUm: 5 } });
    const L = layout();
    const one = runAnalysis(L, settings, m.model, { helper: null });
    const two = runAnalysis(L, settings, m.model);
    expect(one.featureTable.count).toBeGreaterThan(50_000);
    expect(plain(two)).toEqual(plain(one));
  }, 240_000);
});
