'use client';

import { useMutation } from '@tanstack/react-query';
import Link from 'next/link';
import { apiJson } from '@/components/pipeline/api-client';
import type { WhatIfParams } from '@/lib/viewer/whatif';

type Saved = { analysis: { id: string; modelVersion: string }; changes: { path: string; from: number; to: number; unit: string }[] };

/**
 * Ends a what-if's "not saved" state: queues a new analysis of the same revision with the stored settings and the
 * model carrying the slider values (recorded as derived from the analysed model; see lib/viewer/whatif-save.ts).
 */
export function WhatIfSaveButton({ base, params }: { base: string; params: WhatIfParams }) {
  const save = useMutation({ mutationFn: (p: WhatIfParams) => apiJson<Saved>(`${base}/what-if`, { method: 'POST', json: { params: p } }) });
  const saved = save.data;
  return (
    <div className="rounded border border-copper-600 bg-white p-2 text-xs" data-testid="whatif-save">
      <button type="button" className="rounded bg-ink-900 px-2 py-1 font-semibold text-wafer-50 disabled:opacity-50" disabled={save.isPending} onClick={() => save.mutate(params)} data-testid="whatif-save-button">
        {save.isPending ? 'Queuing…' : 'Save as new analysis'}
      </button>
      <p className="mt-1 text-ink-500">Runs the full analysis again with these parameters (model recorded as a what-if derived from the analysed one). This analysis stays as it is.</p>
      {saved ? (
        <p className="mt-1 text-ink-900" role="status" data-testid="whatif-saved" data-analysis-id={saved.analysis.id}>
          Queued with model version {saved.analysis.modelVersion} ({saved.changes.map((c) => `${c.path} ${Number(c.from.toPrecision(4))} → ${Number(c.to.toPrecision(4))}`).join(', ')}).{' '}
          <Link className="underline" href={`/analyses/${saved.analysis.id}`}>
            Open the new analysis
          </Link>
        </p>
      ) : null}
      {save.error ? (
        <p className="mt-1 text-fail" role="alert" data-testid="whatif-save-error">
          {save.error.message}
        </p>
      ) : null}
    </div>
  );
}
