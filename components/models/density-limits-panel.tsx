'use client';

import { useState } from 'react';
import { QueryProvider } from '@/components/pipeline/query-provider';
import { buttonClass } from '@/components/ui/button';
import { KindTargetFields } from './kind-target-fields';
import { useVersionTable } from './use-version-table';
import type { DensityLimits } from '@/lib/etch';

const fmt = (v: number | null, d = 3) => (v === null || !Number.isFinite(v) ? '—' : String(Number(v.toPrecision(d))));
const pct = (v: number) => `${Math.round(v * 1000) / 10} %`;

/** Per width, the effective-density band keeping the depth within target ± tolerance, with the depth grid behind it. */
export function DensityLimitsPanel(props: { versionId: string; defaultTargetUm: number; defaultKind: 'trench' | 'hole' }) {
  return (
    <QueryProvider>
      <Panel {...props} />
    </QueryProvider>
  );
}

function band(r: DensityLimits['rows'][number]): string {
  if (r.maxDensity === null) return 'none: short of target even with nothing open around it';
  if (r.minDensity === null) return 'none: deeper than target + tolerance even at 100 %';
  return `${pct(r.minDensity)} – ${pct(r.maxDensity)}`;
}

function Panel({ versionId, defaultTargetUm, defaultKind }: { versionId: string; defaultTargetUm: number; defaultKind: 'trench' | 'hole' }) {
  const [kind, setKind] = useState(defaultKind);
  const [target, setTarget] = useState(String(defaultTargetUm));
  const [widths, setWidths] = useState('');
  const params = new URLSearchParams({ kind, ...(target.trim() ? { targetDepthUm: target.trim() } : {}), ...(widths.trim() ? { widthsUm: widths.trim() } : {}) });
  const { q, err, url } = useVersionTable<DensityLimits>(versionId, 'density-limits', params);
  const d = q.data;
  return (
    <div className="space-y-3" data-testid="density-limits">
      <div className="flex flex-wrap items-end gap-3">
        <KindTargetFields kind={kind} onKind={setKind} target={target} onTarget={setTarget} testIdPrefix="dl" />
        <label className="text-xs text-ink-700">
          Widths (µm, comma-separated)
          <input className="mt-0.5 block w-48 rounded-md border border-wafer-300 px-2 py-1.5 text-sm" value={widths} onChange={(e) => setWidths(e.target.value)} placeholder="1 to 100, 8 steps" data-testid="dl-widths" />
        </label>
        <a className={buttonClass('secondary')} href={url('csv')} download data-testid="dl-csv">
          Download CSV
        </a>
      </div>
      {err ? (
        <p className="text-sm text-fail" role="alert">
          {err.message}
        </p>
      ) : null}
      {d ? (
        <>
          <p className="text-sm text-ink-800">
            Effective density around a {d.kind} that keeps its depth within {fmt(d.targetDepthUm)} ± {fmt(d.toleranceUm)} µm after {fmt(d.timeMin)} min. Depth cells outside the band are
            marked.
          </p>
          <div className="overflow-x-auto">
            <table className="w-full text-sm" data-testid="dl-table">
              <thead>
                <tr className="border-b border-wafer-200 text-left text-xs text-ink-500">
                  <th className="py-1.5 pr-2 text-right font-medium">Width (µm)</th>
                  <th className="py-1.5 px-2 font-medium">Density band</th>
                  {d.densities.map((rho) => (
                    <th key={rho} className="py-1.5 px-1 text-right font-medium whitespace-nowrap">
                      {pct(rho)}
                    </th>
                  ))}
                </tr>
              </thead>
              <tbody>
                {d.rows.map((r) => (
                  <tr key={r.widthUm} className="border-b border-wafer-100">
                    <td className="py-1 pr-2 text-right font-mono">{fmt(r.widthUm)}</td>
                    <td className={`py-1 px-2 whitespace-nowrap ${r.maxDensity === null || r.minDensity === null ? 'text-fail' : 'text-ink-800'}`}>{band(r)}</td>
                    {r.depthsUm.map((depth, i) => {
                      const rho = d.densities[i] ?? 0;
                      const ok = r.minDensity !== null && r.maxDensity !== null && rho >= r.minDensity && rho <= r.maxDensity;
                      return (
                        <td key={i} className={`py-1 px-1 text-right font-mono ${ok ? 'text-ink-800' : 'bg-fail/10 text-fail'}`}>
                          {fmt(depth)}
                        </td>
                      );
                    })}
                  </tr>
                ))}
              </tbody>
            </table>
          </div>
          <p className="text-xs text-ink-500">
            Depths in µm at each effective density.{' '}
            {d.calibratedDensity ? `The model was calibrated for densities ${pct(d.calibratedDensity[0])} – ${pct(d.calibratedDensity[1])}; limits outside that range are extrapolated. ` : 'This version has no calibration record, so every limit is extrapolated from the model alone. '}
            {d.caution}
          </p>
        </>
      ) : q.isLoading ? (
        <p className="text-sm text-ink-500">Computing…</p>
      ) : null}
    </div>
  );
}
