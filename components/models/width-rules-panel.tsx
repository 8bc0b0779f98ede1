'use client';

import { useState } from 'react';
import { QueryProvider } from '@/components/pipeline/query-provider';
import { buttonClass } from '@/components/ui/button';
import { KindTargetFields } from './kind-target-fields';
import { useVersionTable } from './use-version-table';
import type { WidthRules } from '@/lib/etch';

const fmt = (v: number | null, d = 3) => (v === null || !Number.isFinite(v) ? '—' : String(Number(v.toPrecision(d))));

/** Width-rule table for a chosen kind, target depth and density, with CSV and JSON downloads. */
export function WidthRulesPanel(props: { versionId: string; defaultTargetUm: number; defaultKind: 'trench' | 'hole' }) {
  return (
    <QueryProvider>
      <Panel {...props} />
    </QueryProvider>
  );
}

function Panel({ versionId, defaultTargetUm, defaultKind }: { versionId: string; defaultTargetUm: number; defaultKind: 'trench' | 'hole' }) {
  const [kind, setKind] = useState(defaultKind);
  const [target, setTarget] = useState(String(defaultTargetUm));
  const [density, setDensity] = useState('');
  const params = new URLSearchParams({ kind, ...(target.trim() ? { targetDepthUm: target.trim() } : {}), ...(density.trim() ? { density: density.trim() } : {}) });
  const { q, err, url } = useVersionTable<WidthRules>(versionId, 'width-rules', params);
  const k = q.data?.uncertaintyBandK ?? null;
  return (
    <div className="space-y-3" data-testid="width-rules">
      <div className="flex flex-wrap items-end gap-3">
        <KindTargetFields kind={kind} onKind={setKind} target={target} onTarget={setTarget} testIdPrefix="wr" />
        <label className="text-xs text-ink-700">
          Effective density (0–1)
          <input className="mt-0.5 block w-28 rounded-md border border-wafer-300 px-2 py-1.5 text-sm" value={density} onChange={(e) => setDensity(e.target.value)} placeholder="0" inputMode="decimal" />
        </label>
        <a className={buttonClass('secondary')} href={url('csv')} download data-testid="wr-csv">
          Download CSV
        </a>
        <a className={buttonClass('secondary')} href={url('json')} download data-testid="wr-json">
          Download JSON
        </a>
      </div>
      {err ? (
        <p className="text-sm text-fail" role="alert">
          {err.message}
        </p>
      ) : null}
      {q.data ? (
        <>
          <p className="text-sm text-ink-800" data-testid="wr-minimum">
            Minimum {q.data.kind} width reaching {fmt(q.data.targetDepthUm)} − {fmt(q.data.toleranceUm)} µm in {fmt(q.data.timeMin)} min:{' '}
            <strong>{q.data.minimumWidthUm === null ? 'none in 0.01–10,000 µm' : `${fmt(q.data.minimumWidthUm, 4)} µm`}</strong>
          </p>
          <table className="w-full text-sm">
            <thead>
              <tr className="border-b border-wafer-200 text-left text-xs text-ink-500">
                <th className="py-1.5 text-right font-medium">Width (µm)</th>
                <th className="py-1.5 text-right font-medium">Predicted depth (µm)</th>
                <th className="py-1.5 text-right font-medium">Aspect ratio</th>
                <th className="py-1.5 text-right font-medium">Margin (µm)</th>
                <th className="py-1.5 pl-4 font-medium">Result</th>
              </tr>
            </thead>
            <tbody>
              {q.data.rows.map((r) => (
                <tr key={r.widthUm} className="border-b border-wafer-100">
                  <td className="py-1 text-right font-mono">{fmt(r.widthUm)}</td>
                  <td className="py-1 text-right font-mono">
                    {fmt(r.depthUm)}
                    {k !== null && r.depthSigmaUm !== null ? <span className="text-xs text-ink-500"> ± {fmt(k * r.depthSigmaUm, 2)}</span> : null}
                  </td>
                  <td className="py-1 text-right font-mono">{fmt(r.aspectRatio)}</td>
                  <td className="py-1 text-right font-mono">{fmt(r.marginUm)}</td>
                  <td className={`py-1 pl-4 ${r.pass ? 'text-pass' : 'text-fail'}`}>{r.status === 'pass' ? 'pass' : r.status === 'short' ? 'fail — short of target' : 'fail — deeper than target + tolerance'}</td>
                </tr>
              ))}
            </tbody>
          </table>
          <p className="text-xs text-ink-500">
            {k !== null ? `± is ${k} σ of the predicted depth from the calibration's parameter uncertainty, not wafer scatter. ` : 'This version has no calibration covariance, so no uncertainty is shown. '}
            {q.data.caution}
          </p>
        </>
      ) : q.isLoading ? (
        <p className="text-sm text-ink-500">Computing…</p>
      ) : null}
    </div>
  );
}
