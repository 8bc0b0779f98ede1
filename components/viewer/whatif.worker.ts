/// <reference lib="webworker" />
// What-if worker: holds the per-opening columns and recomputes predictions, maps and flags per slider move.
import type { ProcessModel } from '@/lib/etch/process-model';
import type { Flag, SeverityMap } from '@/lib/pipeline/flags';
import type { ResolvedLimits } from '@/lib/pipeline/settings';
import { decodeFeatures, type WireFeatures } from '@/lib/viewer/feature-wire';
import { ownerMap, PredictorCache, runWhatIf, spread, uniqueInputs, type WhatIfParams } from '@/lib/viewer/whatif';

export type WhatIfInit = {
  type: 'init';
  featuresUrl: string;
  model: ProcessModel;
  limits: ResolvedLimits;
  severities: SeverityMap;
  exposedFraction: number;
  coverage: Float32Array | null;
  grid: { x0Um: number; y0Um: number; pixelUm: number; nx: number; ny: number } | null;
};
export type WhatIfRun = { type: 'run'; seq: number; params: WhatIfParams };
export type WhatIfReply =
  | { type: 'ready'; count: number; storedMargin: Float32Array | null }
  | { type: 'result'; seq: number; depth: Float32Array | null; margin: Float32Array | null; risk: Float32Array | null; flags: Flag[]; underTarget: number; count: number; ms: { predictor: number; features: number; flags: number; maps: number; total: number } }
  | { type: 'error'; message: string };

let init: WhatIfInit | null = null;
let features: WireFeatures | null = null;
let owner: Int32Array | null = null;
const cache = new PredictorCache();
const post = (m: WhatIfReply, transfer: ArrayBuffer[] = []) => (self as unknown as Worker).postMessage(m, transfer);

self.onmessage = async (e: MessageEvent<WhatIfInit | WhatIfRun>) => {
  try {
    if (e.data.type === 'init') {
      init = e.data;
      const res = await fetch(init.featuresUrl, { credentials: 'same-origin' });
      if (!res.ok) throw new Error(`per-opening data: HTTP ${res.status}`);
      features = decodeFeatures(new Uint8Array(await res.arrayBuffer()));
      uniqueInputs(features); // once, so slider moves only predict
      owner = init.coverage && init.grid ? ownerMap(features, init.coverage, init.grid) : null;
      const storedMargin = owner ? spread(owner, features.marginUm) : null;
      post({ type: 'ready', count: features.count, storedMargin }, storedMargin ? [storedMargin.buffer as ArrayBuffer] : []);
      return;
    }
    if (!init || !features) throw new Error('what-if worker not initialised');
    const t0 = performance.now();
    const r = runWhatIf({ model: init.model, limits: init.limits, severities: init.severities, exposedFraction: init.exposedFraction, features }, e.data.params, cache);
    const t1 = performance.now();
    const depth = owner ? spread(owner, r.depthUm) : null;
    const margin = owner ? spread(owner, r.marginUm) : null;
    const risk = owner ? spread(owner, r.risk) : null;
    const t2 = performance.now();
    const transfer = [depth, margin, risk].filter((a): a is Float32Array => a !== null).map((a) => a.buffer as ArrayBuffer);
    post({ type: 'result', seq: e.data.seq, depth, margin, risk, flags: r.flags, underTarget: r.underTarget, count: features.count, ms: { ...r.ms, maps: t2 - t1, total: t2 - t0 } }, transfer);
  } catch (err) {
    post({ type: 'error', message: err instanceof Error ? err.message : String(err) });
  }
};
