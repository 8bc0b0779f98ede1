'use client';

import { useEffect, useMemo, useRef, useState } from 'react';
import type { ProcessModel } from '@/lib/etch/process-model';
import type { Flag } from '@/lib/pipeline/flags';
import type { GridGeometry } from '@/lib/pipeline/grid-file';
import type { ViewerInfo } from '@/lib/viewer/viewer-source';
import { paramsOf, type WhatIfParams } from '@/lib/viewer/whatif';
import type { WhatIfReply } from './whatif.worker';

export type WhatIfState = { params: WhatIfParams; depth: Float32Array | null; margin: Float32Array | null; risk: Float32Array | null; flags: Flag[]; ms: number; underTarget: number; count: number };

/**
 * The what-if worker: loads the per-opening columns once, then recomputes on every slider move. One run at a
 * time; moves that arrive meanwhile collapse into the latest, so the maps follow the slider without a backlog.
 */
export function useWhatIf(info: ViewerInfo | undefined, coverage: { values: Float32Array; grid: GridGeometry } | null, base: string, start: boolean) {
  const [whatIf, setWhatIf] = useState<WhatIfState | null>(null);
  const [storedMargin, setStoredMargin] = useState<Float32Array | null>(null);
  const [status, setStatus] = useState('loading per-opening data…');
  const worker = useRef<Worker | null>(null);
  const seq = useRef(0);
  const busy = useRef(false);
  const pending = useRef<WhatIfParams | null>(null);
  const baseParams = useMemo(() => (info ? paramsOf(info.model as unknown as ProcessModel) : null), [info]);

  useEffect(() => {
    // Started only once the maps are on screen, so the per-opening download never delays the first picture.
    if (!info || !coverage || !start) return;
    const w = new Worker(new URL('./whatif.worker.ts', import.meta.url), { type: 'module' });
    worker.current = w;
    busy.current = false;
    w.onmessage = (e: MessageEvent<WhatIfReply>) => {
      const m = e.data;
      if (m.type === 'ready') {
        setStoredMargin(m.storedMargin);
        setStatus(`${m.count.toLocaleString('en')} openings loaded`);
        return;
      }
      busy.current = false;
      if (m.type === 'error') {
        setStatus(`what-if failed: ${m.message}`);
      } else {
        setWhatIf((prev) => (prev ? { ...prev, depth: m.depth, margin: m.margin, risk: m.risk, flags: m.flags, ms: m.ms.total, underTarget: m.underTarget, count: m.count } : prev));
        setStatus(`${m.count.toLocaleString('en')} openings in ${m.ms.total.toFixed(0)} ms (${m.threads} thread${m.threads > 1 ? 's' : ''}) · ${m.underTarget} under target · ${m.flags.length} opening flags${m.flagsLeftOut > 0 ? ` (first ${m.flags.length.toLocaleString('en')} only: ${m.flagsLeftOut.toLocaleString('en')} more flagged openings are not marked in the what-if; save it as a new analysis to see all)` : ''}`);
      }
      const next = pending.current;
      pending.current = null;
      if (next) {
        busy.current = true;
        w.postMessage({ type: 'run', seq: ++seq.current, params: next });
      }
    };
    const initMsg = { type: 'init', featuresUrl: `${base}/features.bin`, model: info.model, limits: info.limits, severities: info.severities, exposedFraction: info.exposedFraction } as const;
    // A helper predicts half of the distinct openings in parallel (lib/viewer/whatif.ts predictUnique).
    let helper: Worker | null = null;
    const link = typeof MessageChannel === 'function' && (navigator.hardwareConcurrency ?? 1) > 1 ? new MessageChannel() : null;
    if (link) {
      helper = new Worker(new URL('./whatif.worker.ts', import.meta.url), { type: 'module' });
      helper.postMessage({ ...initMsg, coverage: null, grid: null, role: 'helper', port: link.port2 }, [link.port2]);
      w.postMessage({ ...initMsg, coverage: coverage.values, grid: coverage.grid, role: 'main', port: link.port1 }, [link.port1]);
    } else {
      w.postMessage({ ...initMsg, coverage: coverage.values, grid: coverage.grid });
    }
    return () => {
      w.terminate();
      helper?.terminate();
    };
  }, [info, coverage, base, start]);

  const run = (params: WhatIfParams) => {
    setWhatIf((prev) => ({ params, depth: prev?.depth ?? null, margin: prev?.margin ?? null, risk: prev?.risk ?? null, flags: prev?.flags ?? [], ms: 0, underTarget: 0, count: 0 }));
    if (busy.current) {
      pending.current = params;
      return;
    }
    busy.current = true;
    worker.current?.postMessage({ type: 'run', seq: ++seq.current, params });
  };
  const reset = () => {
    pending.current = null;
    setWhatIf(null);
  };
  return { whatIf, storedMargin, status, baseParams, run, reset };
}
