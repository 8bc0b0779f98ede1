import { createFeaturePredictor, predictFeature, parseProcessModel } from '../lib/etch';
const r = parseProcessModel({ openRateUmPerMin: 2, reactionProbability: 0.3, loading: { coefficient: 0.4, lengthUm: 1000 }, etch: { timeMin: 10, targetDepthUm: 15, toleranceUm: 1, maxAspectRatio: 50, stopRateFraction: 0.01 }, mode: 'continuous', ion: { angularSigmaDeg: 3, neutralToIonSupplyRatio: 1 } });
if (!r.ok) throw new Error();
const m = r.model;
let t = performance.now();
const fp = createFeaturePredictor(m);
fp({ widthUm: 1, kind: 'trench' }); fp({ widthUm: 1, kind: 'hole' });
console.log('build ms', performance.now() - t, fp.maxRelTauError());
let worst = 0;
for (let i = 0; i < 2000; i++) {
  const w = Math.exp(Math.log(0.5) + Math.random() * Math.log(1000));
  const inp = { widthUm: w, kind: (i % 2 ? 'hole' : 'trench') as 'hole' | 'trench', effectiveDensity: Math.random() };
  const a = predictFeature(m, inp), b = fp(inp);
  const e = Math.abs(a.depthUm - b.depthUm) / Math.max(a.depthUm, 1e-300);
  const e2 = a.timeToTargetMin === null ? (b.timeToTargetMin === null ? 0 : 1) : Math.abs(a.timeToTargetMin - (b.timeToTargetMin ?? NaN)) / a.timeToTargetMin;
  worst = Math.max(worst, e, e2);
  if (!(e < 1e-6 && e2 < 1e-6)) console.log(inp, a.depthUm, b.depthUm, a.timeToTargetMin, b.timeToTargetMin);
}
console.log('worst', worst);
const N = 20000; t = performance.now();
for (let i = 0; i < N; i++) predictFeature(m, { widthUm: 0.5 + i * 0.01, kind: 'trench', effectiveDensity: 0.3 });
console.log('ref us', (performance.now() - t) / N * 1000);
t = performance.now();
for (let i = 0; i < N * 10; i++) fp({ widthUm: 0.5 + i * 0.001, kind: 'trench', effectiveDensity: 0.3 });
console.log('fast us', (performance.now() - t) / N / 10 * 1000);
