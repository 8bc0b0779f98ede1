/// <reference lib="webworker" />
// What-if worker: holds the per-opening columns and recomputes predictions, maps and flags per slider move.
// Started twice by use-what-if: the main one answers the page; a helper, linked to it by a MessagePort, predicts the
// second half of the distinct openings at the same time, so a move costs about half on two cores.
import type { ProcessModel } from '@/lib/etch/process-model';
import type { Flag, SeverityMap } from '@/lib/pipeline/flags';
import type { ResolvedLimits } from '@/lib/pipeline/settings';
import { decodeFeatures, type WireFeatures } from '@/lib/viewer/feature-wire';
import { ownerMap, predictUnique, PredictorCache, runWhatIf, splitPoint, spread, uniqueInputs, type UniquePrediction, type WhatIfParams } from '@/lib/viewer/whatif';

export type WhatIfInit = {
  type: 'init';
  featuresUrl: string;
  model: ProcessModel;
  limits: ResolvedLimits;
  severities: SeverityMap;
  exposedFraction: number;
  coverage: Float32Array | null;
  grid: { x0Um: number; y0Um: number; pixelUm: number; nx: number; ny: number } | null;
  /** The link between the main worker and its helper (absent: one thread). */
  port?: MessagePort;
  role?: 'main' | 'helper';
};
export type WhatIfRun = { type: 'run'; seq: number; params: WhatIfParams };
export type WhatIfReply =
  | { type: 'ready'; count: number; storedMargin: Float32Array | null }
  | { type: 'result'; seq: number; depth: Float32Array | null; margin: Float32Array | null; risk: Float32Array | null; flags: Flag[]; flagsLeftOut: number; underTarget: number; count: number; threads: number; ms: { predictor: number; features: number; flags: number; maps: number; total: number } }
  | { type: 'error'; message: string };
type HelperAsk = { seq: number; params: WhatIfParams; q0: number };
type HelperAnswer = { seq: number; pred: UniquePrediction } | { seq: number; error: string } | { ready: true };

let init: WhatIfInit | null = null;
let features: WireFeatures | null = null;
let owner: Int32Array | null = null;
let helperReady = false;
const waiting = new Map<number, (p: UniquePrediction | null) => void>();
const cache = new PredictorCache();
const post = (m: WhatIfReply, transfer: ArrayBuffer[] = []) => (self as unknown as Worker).postMessage(m, transfer);

async function load(i: WhatIfInit): Promise<WireFeatures> {
  const res = await fetch(i.featuresUrl, { credentials: 'same-origin' });
  if (!res.ok) throw new Error(`per-opening data: HTTP ${res.status}`);
  const f = decodeFeatures(new Uint8Array(await res.arrayBuffer()));
  uniqueInputs(f); // once, so slider moves only predict
  return f;
}

function ctxOf(i: WhatIfInit, f: WireFeatures) {
  return { model: i.model, limits: i.limits, severities: i.severities, exposedFraction: i.exposedFraction, features: f };
}

async function startHelper(i: WhatIfInit, port: MessagePort) {
  const f = await load(i);
  const ctx = ctxOf(i, f);
  const m = uniqueInputs(f).kind.length;
  port.onmessage = (e: MessageEvent<HelperAsk>) => {
    try {
      const pred = predictUnique(ctx, e.data.params, cache, e.data.q0, m);
      const answer: HelperAnswer = { seq: e.data.seq, pred };
      port.postMessage(answer, [pred.depth, pred.margin, pred.over, pred.ar, pred.risk, pred.reach].map((a) => a.buffer as ArrayBuffer));
    } catch (err) {
      port.postMessage({ seq: e.data.seq, error: err instanceof Error ? err.message : String(err) } satisfies HelperAnswer);
    }
  };
  port.postMessage({ ready: true } satisfies HelperAnswer);
}

self.onmessage = async (e: MessageEvent<WhatIfInit | WhatIfRun>) => {
  try {
    if (e.data.type === 'init') {
      if (e.data.role === 'helper' && e.data.port) return await startHelper(e.data, e.data.port);
      init = e.data;
      const port = init.port;
      if (port) {
        port.onmessage = (m: MessageEvent<HelperAnswer>) => {
          const a = m.data;
          if ('ready' in a) helperReady = true;
          else {
            waiting.get(a.seq)?.('pred' in a ? a.pred : null);
            waiting.delete(a.seq);
          }
        };
      }
      features = await load(init);
      owner = init.coverage && init.grid ? ownerMap(features, init.coverage, init.grid) : null;
      const storedMargin = owner ? spread(owner, features.marginUm) : null;
      post({ type: 'ready', count: features.count, storedMargin }, storedMargin ? [storedMargin.buffer as ArrayBuffer] : []);
      return;
    }
    if (!init || !features) throw new Error('what-if worker not initialised');
    const t0 = performance.now();
    const ctx = ctxOf(init, features);
    const params = e.data.params;
    const q0 = helperReady && init.port ? splitPoint(features) : null;
    let r;
    if (q0 !== null && init.port) {
      const seq = e.data.seq;
      const tailP = new Promise<UniquePrediction | null>((resolve) => waiting.set(seq, resolve));
      init.port.postMessage({ seq, params, q0 } satisfies HelperAsk);
      const head = predictUnique(ctx, params, cache, 0, q0);
      const tail = await tailP;
      // Without the helper's half (it failed), runWhatIf predicts everything here.
      r = runWhatIf(ctx, params, cache, 5000, tail ?? undefined, tail ? head : undefined);
    } else {
      r = runWhatIf(ctx, params, cache);
    }
    const t1 = performance.now();
    const depth = owner ? spread(owner, r.depthUm) : null;
    const margin = owner ? spread(owner, r.marginUm) : null;
    const risk = owner ? spread(owner, r.risk) : null;
    const t2 = performance.now();
    const transfer = [depth, margin, risk].filter((a): a is Float32Array => a !== null).map((a) => a.buffer as ArrayBuffer);
    post({ type: 'result', seq: e.data.seq, depth, margin, risk, flags: r.flags, flagsLeftOut: r.flagsLeftOut, underTarget: r.underTarget, count: features.count, threads: q0 !== null ? 2 : 1, ms: { ...r.ms, maps: t2 - t1, total: t2 - t0 } }, transfer);
  } catch (err) {
    post({ type: 'error', message: err instanceof Error ? err.message : String(err) });
  }
};
