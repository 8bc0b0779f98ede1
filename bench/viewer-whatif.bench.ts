/**
 * What-if recomputation speed (by hand): 100 000 synthetic openings through lib/viewer/whatif.ts as the viewer's
 * worker runs it — etch-time moves (predictor tables kept) and model-parameter moves (tables rebuilt), plus
 * spreading three per-opening results onto a 1000 × 1000 map, on one thread and split over two (as the viewer's
 * main worker and its helper do: predictUnique of the second half on a worker thread). Target: < 100 ms per slider
 * move for 100k.
 * Run: npx tsx bench/viewer-whatif.bench.ts (or npm run bench -- whatif).
 */
import { readFileSync } from 'node:fs';
import { pathToFileURL } from 'node:url';
import { parseProcessModel, type ProcessModel } from '../lib/etch';
import { decodeFeatures, encodeFeatures } from '../lib/viewer/feature-wire';
import { Worker } from 'node:worker_threads';
import { paramsOf, predictUnique, PredictorCache, runWhatIf, splitPoint, spread, uniqueInputs, type UniquePrediction, type WhatIfParams } from '../lib/viewer/whatif';
import { mulberry32 } from '../lib/random';

export function features(n: number, repeated = false) {
  const rnd = mulberry32(99);
  const col = (f: (i: number) => number) => Array.from({ length: n }, (_, i) => f(i));
  return decodeFeatures(
    encodeFeatures({
      count: n,
      featureId: col((i) => i),
      modelKind: col(() => (rnd() < 0.6 ? 1 : 0)),
      reachesTarget: col(() => 0),
      xUm: col((i) => (i % 1000) * 10 + 5),
      yUm: col((i) => Math.floor(i / 1000) * 10 + 5),
      x0Um: col((i) => (i % 1000) * 10 + 3),
      y0Um: col((i) => Math.floor(i / 1000) * 10 + 3),
      x1Um: col((i) => (i % 1000) * 10 + 7),
      y1Um: col((i) => Math.floor(i / 1000) * 10 + 7),
      areaUm2: col(() => 16),
      widthUm: col(() => (repeated ? 0.8 + Math.floor(rnd() * 20) * 0.3 : 0.8 + rnd() * 6)),
      effectiveDensity: col(() => (repeated ? Math.floor(rnd() * 500) / 1000 : Math.round(rnd() * 0.6 * 1e4) / 1e4)),
      depthUm: col(() => 0),
      aspectRatio: col(() => 0),
      marginUm: col(() => 0),
      overEtchUm: col(() => 0),
    }),
  );
}

export default async function whatIfBench(): Promise<void> {
  for (const repeated of [false, true]) await once(repeated);
}

export function benchContext(repeated: boolean) {
  const raw = JSON.parse(readFileSync('samples/models/deep-trench-continuous.json', 'utf8'));
  const parsed = parseProcessModel(raw);
  if (!parsed.ok) throw new Error('model does not validate');
  const model: ProcessModel = parsed.model;
  const limits = { minDensity: null, maxDensity: null, maxGradient: null, maxAspectRatio: model.etch.maxAspectRatio, targetDepthUm: model.etch.targetDepthUm, toleranceUm: model.etch.toleranceUm, stopOverEtchBudgetUm: null, minWidthUm: 1 };
  const f = features(100_000, repeated);
  return { model, limits, severities: {}, exposedFraction: 0.25, features: f };
}

/** A worker thread running bench/viewer-whatif-helper.ts (through tsx, as the bench runs from source). */
function helperThread(repeated: boolean): { ask: (params: WhatIfParams, q0: number) => Promise<UniquePrediction>; ready: Promise<void>; stop: () => Promise<number> } {
  const tsx = import.meta.resolve('tsx/esm/api');
  const src = new URL('./viewer-whatif-helper.ts', import.meta.url).href;
  const w = new Worker(`import(${JSON.stringify(tsx)}).then((m) => { m.register(); return import(${JSON.stringify(src)}); });`, { eval: true, workerData: { repeated } });
  let pending: ((p: UniquePrediction) => void) | null = null;
  let onReady: () => void = () => {};
  const ready = new Promise<void>((r) => (onReady = r));
  w.on('message', (m: { ready?: true; pred?: UniquePrediction }) => {
    if (m.ready) onReady();
    else if (m.pred) pending?.(m.pred);
  });
  return {
    ready,
    ask: (params, q0) => new Promise((resolve) => ((pending = resolve), w.postMessage({ params, q0 }))),
    stop: () => w.terminate(),
  };
}

async function once(repeated: boolean): Promise<void> {
  const ctx = benchContext(repeated);
  const { model, features: f } = ctx;
  const cache = new PredictorCache();
  const base = paramsOf(model);
  runWhatIf(ctx, base, cache); // warm-up (JIT, tables)
  const time: number[] = [];
  const param: number[] = [];
  const owner = new Int32Array(1_000_000).map((_, p) => (p % 10 === 0 ? Math.floor(p / 10) : -1));
  let spreadMs = 0;
  for (let k = 0; k < 10; k++) {
    let t = performance.now();
    const r = runWhatIf(ctx, { ...base, timeMin: base.timeMin * (0.6 + 0.08 * k) }, cache);
    const s = performance.now();
    spread(owner, r.depthUm);
    spread(owner, r.marginUm);
    spread(owner, r.risk);
    spreadMs += performance.now() - s;
    time.push(s - t);
    if (k === 9) console.log(`  split of the last etch-time move: ${JSON.stringify(Object.fromEntries(Object.entries(r.ms).map(([a, b]) => [a, Math.round(b)])))} ms, ${r.flags.length} flags`);
    t = performance.now();
    runWhatIf(ctx, { ...base, reactionProbability: Math.min(1, base.reactionProbability * (0.7 + 0.06 * k)) }, cache);
    param.push(performance.now() - t);
  }
  const med = (a: number[]) => [...a].sort((x, y) => x - y)[Math.floor(a.length / 2)]!;
  console.log(`what-if over ${f.count.toLocaleString('en')} openings, ${repeated ? '20 widths × 500 densities (repeats predicted once)' : 'all inputs distinct (worst case)'} (${model.name ?? 'model'}):`);
  console.log(`  etch-time move (tables kept):       median ${med(time).toFixed(1)} ms, max ${Math.max(...time).toFixed(1)} ms`);
  console.log(`  parameter move (tables rebuilt):    median ${med(param).toFixed(1)} ms, max ${Math.max(...param).toFixed(1)} ms`);
  console.log(`  spreading 3 maps onto 1000×1000:    ${(spreadMs / 10).toFixed(1)} ms per move`);

  // Two threads: the second half of the distinct inputs on a worker thread, as the viewer's helper worker does.
  const helper = helperThread(repeated);
  await helper.ready;
  const q0 = splitPoint(f, 1) ?? uniqueInputs(f).kind.length;
  const two: number[] = [];
  for (let k = 0; k < 11; k++) {
    const p = { ...base, timeMin: base.timeMin * (0.6 + 0.08 * k) };
    const t = performance.now();
    const tailP = helper.ask(p, q0);
    const head = predictUnique(ctx, p, cache, 0, q0);
    const r = runWhatIf(ctx, p, cache, 5000, await tailP, head);
    spread(owner, r.depthUm);
    spread(owner, r.marginUm);
    spread(owner, r.risk);
    if (k > 0) two.push(performance.now() - t); // the first one warms the helper's tables
  }
  await helper.stop();
  console.log(`  etch-time move on 2 threads, with the 3 maps: median ${med(two).toFixed(1)} ms, max ${Math.max(...two).toFixed(1)} ms`);
}

if (import.meta.url === pathToFileURL(process.argv[1] ?? '').href) await whatIfBench();
