// Worker-thread half of bench/viewer-whatif.bench.ts: predicts the distinct inputs from q0 on, as the viewer's helper worker does.
import { parentPort, workerData } from 'node:worker_threads';
import { predictUnique, PredictorCache, uniqueInputs, type WhatIfParams } from '../lib/viewer/whatif';
import { benchContext } from './viewer-whatif.bench';

const ctx = benchContext(Boolean((workerData as { repeated: boolean }).repeated));
const m = uniqueInputs(ctx.features).kind.length;
const cache = new PredictorCache();
parentPort!.on('message', (a: { params: WhatIfParams; q0: number }) => {
  const pred = predictUnique(ctx, a.params, cache, a.q0, m);
  parentPort!.postMessage({ pred }, [pred.depth, pred.margin, pred.over, pred.ar, pred.risk, pred.reach].map((x) => x.buffer as ArrayBuffer));
});
parentPort!.postMessage({ ready: true });
