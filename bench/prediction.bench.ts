/**
 * Prediction stage benchmark: 1 M random openings (widths 0.5–500 µm log-uniform, trench/hole, densities 0–1,
 * seeded) through the tabulated predictor (createFeaturePredictor) and, on a sample, the reference predictFeature
 * (adaptive quadrature per opening), per model variant. Prints µs per opening and the load average.
 * Run: npm run bench -- prediction, or npx tsx bench/run.ts prediction
 */
import { loadavg } from 'node:os';
import { featureTableOf, type Feature, type Grid } from '../lib/geometry';
import { predictFeatureTable } from '../lib/pipeline/predict-features';
import { createArdeEvaluators, createFeaturePredictor, parseProcessModel, predictFeature, type FeatureInput, type ProcessModelInput } from '../lib/etch';

const BASE: ProcessModelInput = {
  openRateUmPerMin: 3,
  reactionProbability: 0.2,
  loading: { coefficient: 0.3, lengthUm: 800 },
  etch: { timeMin: 10, targetDepthUm: 25, toleranceUm: 1.5, maxAspectRatio: 30 },
  mode: 'continuous',
};
const VARIANTS: [string, Partial<ProcessModelInput>][] = [
  ['continuous, neutral (pipeline bench model)', {}],
  ['continuous, ion centre + stop layer', { ion: { angularSigmaDeg: 3, neutralToIonSupplyRatio: 1 }, stopLayer: { depthUm: 28, selectivity: 40 } }],
  ['cyclic (8 s cycles, 75 cycles)', { mode: 'cyclic', cyclic: { etchStepS: 6, passivationStepS: 2 } }],
];

function inputs(count: number): FeatureInput[] {
  let s = 12345;
  const r = () => ((s = (Math.imul(s, 1664525) + 1013904223) >>> 0) / 4294967296);
  return Array.from({ length: count }, () => ({ widthUm: 0.5 * Math.pow(1000, r()), kind: r() < 0.5 ? 'trench' : 'hole', effectiveDensity: r(), exposedFraction: 0.3 }));
}

export default async function predictionBench(): Promise<void> {
  const N = 1_000_000;
  const SAMPLE = 2_000;
  const all = inputs(N);
  console.log(`load average (1/5/15 min) at start: ${loadavg().map((v) => v.toFixed(2)).join(' ')}`);
  for (const [name, over] of VARIANTS) {
    const parsed = parseProcessModel({ ...BASE, ...over });
    if (!parsed.ok) throw new Error(JSON.stringify(parsed.issues));
    const model = parsed.model;
    const tb = performance.now();
    const fast = createFeaturePredictor(model);
    fast({ widthUm: 1, kind: 'trench' });
    fast({ widthUm: 1, kind: 'hole' });
    const buildMs = performance.now() - tb;
    const t0 = performance.now();
    let sink = 0;
    for (const input of all) sink += fast(input).depthUm;
    const fastUs = ((performance.now() - t0) * 1000) / N;
    const arde = createArdeEvaluators(model, model.etch.maxAspectRatio);
    const t1 = performance.now();
    for (let i = 0; i < SAMPLE; i++) sink += predictFeature(model, all[i] as FeatureInput, { arde }).depthUm;
    const refUs = ((performance.now() - t1) * 1000) / SAMPLE;
    console.log(
      `${name}: tables ${buildMs.toFixed(0)} ms; fast ${fastUs.toFixed(2)} µs/opening (${((fastUs * N) / 1e6).toFixed(2)} s per 1 M); ` +
        `reference ${refUs.toFixed(0)} µs/opening (sample ${SAMPLE}; ${((refUs * N) / 1e6).toFixed(0)} s per 1 M); speed-up ${(refUs / fastUs).toFixed(0)}×; ` +
        `τ error ${fast.maxRelTauError().toExponential(1)} (checksum ${sink.toExponential(3)})`,
    );
  }
  // The pipeline stage itself (lib/pipeline/predict-features.ts: sampling, cache key, result objects) on 1 M
  // synthetic openings over a 10 mm die (widths on a 1 nm grid, as from a GDSII database unit).
  const parsed = parseProcessModel(BASE);
  if (!parsed.ok) throw new Error('bad bench model');
  const grid: Grid = { x0Um: 0, y0Um: 0, pixelUm: 10, nx: 1000, ny: 1000 };
  const effective = new Float32Array(grid.nx * grid.ny);
  for (let i = 0; i < effective.length; i++) effective[i] = 0.5 + 0.4 * Math.sin(i * 0.001) * Math.cos(i * 0.0007);
  const features: Feature[] = all.map((input, id) => {
    const w = Math.round(input.widthUm * 1000) / 1000;
    const x = ((id * 7919) % 10_000) + 0.5;
    const y = ((id * 104729) % 10_000) + 0.5;
    return {
      id, kind: input.kind === 'hole' ? 'round-hole' : 'trench', centroidUm: [x, y], bboxUm: [x - w / 2, y - w / 2, x + w / 2, y + w / 2],
      areaUm2: w * 4 * w, perimeterUm: 10 * w, minWidthUm: w, maxWidthUm: w, lengthUm: 4 * w, widthStepUm: 0, widthExact: true, pieces: 1,
    };
  });
  const table = featureTableOf(features);
  const tp = performance.now();
  const results = predictFeatureTable(table, effective, grid, parsed.model, { exposedFraction: 0.3 });
  const stageS = (performance.now() - tp) / 1000;
  console.log(`pipeline predictFeatureTable, ${results.count} openings (continuous, neutral): ${stageS.toFixed(2)} s (${((stageS * 1e6) / results.count).toFixed(2)} µs/opening)`);
  console.log(`load average (1/5/15 min) at end: ${loadavg().map((v) => v.toFixed(2)).join(' ')}`);
}
