'use client';

import { useMutation, useQueryClient } from '@tanstack/react-query';
import Link from 'next/link';
import { useState } from 'react';
import { apiJson, formatWhen } from '@/components/pipeline/api-client';
import { Button, buttonClass } from '@/components/ui/button';
import type { FindingsResponse } from './types';

/** Sign-off state of the analysis, the sign-off action for reviewers, and the exports. */
export function SignoffPanel({ analysisId, data, csvQuery }: { analysisId: string; data: FindingsResponse; csvQuery: string }) {
  const qc = useQueryClient();
  const [note, setNote] = useState('');
  const sign = useMutation({
    mutationFn: () => apiJson(`/api/v1/analyses/${analysisId}/signoff`, { method: 'POST', json: { note } }),
    onSuccess: () => void qc.invalidateQueries({ queryKey: ['findings', analysisId] }),
  });
  const s = data.signoff;
  return (
    <div className="mb-4 flex flex-wrap items-start justify-between gap-4 rounded-md border border-wafer-200 bg-wafer-50 p-3" data-testid="signoff-panel">
      <div className="text-sm">
        {s.signoff ? (
          <p className="text-pass" data-testid="signoff-done">
            <span className="font-semibold">Signed off</span> by {s.signoff.signedByName} on {formatWhen(s.signoff.signedAt)} · model {s.signoff.modelName} {s.signoff.modelVersion}
            {s.signoff.note ? <span className="block text-xs text-ink-700">“{s.signoff.note}”</span> : null}
          </p>
        ) : (
          <p className={s.canSignOff ? 'text-pass' : 'text-ink-700'} data-testid="signoff-state">
            {s.canSignOff ? 'Ready for sign-off: every error finding is waived or verified.' : `Not ready for sign-off: ${s.reason}`}
          </p>
        )}
        {!s.signoff && data.can.signoff ? (
          <div className="mt-2 flex flex-wrap items-center gap-2">
            <input value={note} onChange={(e) => setNote(e.target.value)} placeholder="Sign-off note (optional)" className="w-64 rounded-md border border-wafer-300 bg-white px-2 py-1 text-xs" aria-label="Sign-off note" />
            <Button className="px-2.5 py-1 text-xs" disabled={!s.canSignOff || sign.isPending} onClick={() => sign.mutate()} data-testid="signoff-button">
              Sign off this analysis
            </Button>
          </div>
        ) : null}
        {sign.error ? (
          <p role="alert" className="mt-1 text-xs text-fail">
            {sign.error.message}
          </p>
        ) : null}
      </div>
      <div className="flex flex-wrap gap-2">
        <a href={`/api/v1/analyses/${analysisId}/findings.csv?${csvQuery}`} className={buttonClass('secondary', 'px-2.5 py-1 text-xs')} data-testid="export-csv">
          Export CSV
        </a>
        <Link href={`/reports/${analysisId}`} className={buttonClass('secondary', 'px-2.5 py-1 text-xs')} target="_blank" data-testid="open-report">
          Printable report
        </Link>
        <Link href={`/analyses/${analysisId}/compare`} className={buttonClass('secondary', 'px-2.5 py-1 text-xs')} data-testid="open-compare">
          Compare revisions
        </Link>
      </div>
    </div>
  );
}
