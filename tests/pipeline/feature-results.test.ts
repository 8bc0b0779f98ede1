/**
 * Per-opening results as columns: the table, its object view, the feature file written from either, the summary's
 * tallies and the deferred flag list must all say the same as the one-object-per-opening definitions written out
 * here. Layout: invented trenches and square holes on a 1 mm die (0.5 µm to 40 µm wide) under an invented model
 * calibrated on 1–30 µm widths, so some openings are outside the calibrated range and the narrowest stall at the
 * model's maximum aspect ratio (both rules of this product: lib/pipeline/flags.ts, predict-features.ts).
 */
import { describe, expect, it } from 'vitest';
import { encodeFeatureFile, featureFileBytes } from '@/lib/jobs/feature-file';
import { concatFeatureResultTables, featureResultAt, featureResultList } from '@/lib/pipeline/feature-results';
import { FlagCollector } from '@/lib/pipeline/flag-collector';
import { featureFlagsInto, type Flag } from '@/lib/pipeline/flags';
import { excursionsOf } from '@/lib/pipeline/predict-features';
import { runAnalysis } from '@/lib/pipeline/run-analysis';
import { analysisSettingsSchema } from '@/lib/pipeline/settings';
import { testModel, trenchLayout, type RectUm } from './fixtures';

const rects: RectUm[] = [];
const widths = [0.5, 0.8, 1, 2, 3, 5, 8, 12, 20, 30, 40];
widths.forEach((w, i) => {
  rects.push([50 + i * 80, 100, 50 + i * 80 + w, 500]); // trench
  rects.push([50 + i * 80, 600, 50 + i * 80 + w, 600 + w]); // square hole
});
const model = testModel({ calibration: { date: '2026-12-03', widthUm: [1, 30], aspectRatio: [0, 30], density: [0, 0.5] } });
const settings = analysisSettingsSchema.parse({ etchLayers: [{ layer: 5, datatype: 0 }], densityWindows: [{ windowUm: 250, stepUm: 125 }], limits: { targetDepthUm: 44, toleranceUm: 2 }, maxListedFlags: 7 });
const r = runAnalysis(trenchLayout(rects), settings, model);
const t = r.featureTable;
const list = r.features;

describe('FeatureResultTable', () => {
  it('has one row per drawn opening, with excursions exactly where the width is outside 1–30 µm', () => {
    expect(t.count).toBe(rects.length);
    const narrowOrWide = list.filter((f) => f.excursions.some((e) => e.quantity === 'width')).map((f) => f.widthUm);
    expect(narrowOrWide.sort((a, b) => a - b)).toEqual([0.5, 0.5, 0.8, 0.8, 40, 40].map((w) => expect.closeTo(w, 9)));
    for (let k = 0; k < t.count; k++) {
      const f = featureResultAt(t, k);
      expect(f.excursions).toEqual(excursionsOf(t.range, f.widthUm, f.aspectRatio, f.effectiveDensity));
    }
    expect(list.some((f) => f.warnings.length > 0)).toBe(true);
  });

  it('feature file: the table and its objects encode to the same bytes', () => {
    expect(featureFileBytes(encodeFeatureFile(t))).toEqual(featureFileBytes(encodeFeatureFile(list)));
  });

  it('concat joins rows and merges note lists by content', () => {
    const two = concatFeatureResultTables([t, t]);
    expect(two.count).toBe(2 * t.count);
    expect(two.noteLists.length).toBe(t.noteLists.length);
    expect(featureResultList(two)).toEqual([...list, ...list]);
    // Parts cut from one table, joined onto that table's own geometry.
    const cut = concatFeatureResultTables([t], t.features);
    expect(cut.features).toBe(t.features);
    expect(featureResultList(cut)).toEqual(list);
  });

  it('summary tallies equal the per-object tally (first-seen order, then by count)', () => {
    const byShape: Record<string, number> = {};
    const warnings = new Map<string, number>();
    for (const f of list) {
      byShape[f.shape] = (byShape[f.shape] ?? 0) + 1;
      for (const w of f.warnings) warnings.set(w, (warnings.get(w) ?? 0) + 1);
      for (const e of f.excursions) warnings.set(`${e.quantity} outside the calibrated range`, (warnings.get(`${e.quantity} outside the calibrated range`) ?? 0) + 1);
    }
    expect(r.summary.features.byShape).toEqual(byShape);
    expect(JSON.stringify(Object.keys(r.summary.features.byShape))).toBe(JSON.stringify(Object.keys(byShape)));
    expect(r.summary.extrapolation).toEqual([...warnings].map(([message, count]) => ({ message, count })).sort((a, b) => b.count - a.count));
  });

  it('deferred flags: the listed flags equal building every flag up front', () => {
    const c = new FlagCollector(settings.maxListedFlags);
    for (const f of list) {
      featureFlagsInto(c, { featureId: f.id, shape: f.shape, modelKind: f.modelKind, bboxUm: f.bboxUm, centroidUm: f.centroidUm, widthUm: f.widthUm, depthUm: f.depthUm, overEtchUm: f.overEtchUm, excursions: f.excursions, depthSigmaUm: f.depthSigmaUm }, r.summary.limits);
    }
    const want: Flag[] = c.list();
    const perOpening = r.flags.filter((f) => f.featureId !== undefined);
    expect(r.summary.flags.total).toBeGreaterThan(settings.maxListedFlags);
    expect(perOpening).toEqual(want.slice(0, perOpening.length));
  });
});
