import { Card } from '@/components/ui/card';
import { formatPercent } from '@/lib/format/percent';
import { layerHints } from '@/lib/pipeline/layer-hints';
import type { AnalysisSummary } from '@/lib/pipeline/summary';

export type Summary = AnalysisSummary;

const pct = (v: number) => formatPercent(v);
const um = (v: number) => `${v.toFixed(2)} µm`;
const n = (v: number) => v.toLocaleString('en');

function Figure({ label, value, sub }: { label: string; value: string; sub?: string }) {
  return (
    <div className="rounded-md border border-wafer-200 bg-wafer-50 px-4 py-3">
      <p className="text-xs text-ink-500">{label}</p>
      <p className="mt-0.5 font-mono text-lg text-ink-900">{value}</p>
      {sub ? <p className="text-xs text-ink-500">{sub}</p> : null}
    </div>
  );
}

/** Headline figures of a finished analysis, with the caution that belongs to every result. */
export function SummaryPanel({ summary: s }: { summary: Summary }) {
  const kinds = Object.entries(s.flags.counts)
    .map(([kind, c]) => ({ kind, ...c, total: c.error + c.warning + c.info }))
    .filter((k) => k.total > 0);
  const hints = layerHints(s);
  return (
    <Card className="p-6">
      <h2 className="mb-4 text-lg font-semibold text-ink-900">Summary</h2>
      {hints.map((h) => (
        <p key={h} role="note" className="mb-4 rounded-md border border-warn/40 bg-warn/5 px-3 py-2 text-sm text-ink-800" data-testid="layer-hint">
          {h}
        </p>
      ))}
      <div className="grid gap-3 sm:grid-cols-2 lg:grid-cols-4" data-testid="summary">
        <Figure label="Global open-area density" value={pct(s.globalDensity)} sub={`layers ${s.layout.etchLayers.join(', ')} · ${n(s.layout.polygonCount)} polygon${s.layout.polygonCount === 1 ? '' : 's'}`} />
        <Figure label="Openings analysed" value={s.features.count.toLocaleString('en')} sub={Object.entries(s.features.byShape).map(([k, c]) => `${n(c)} ${k}`).join(' · ')} />
        <Figure
          label="Predicted depth"
          value={s.depth ? `${s.depth.minUm.toFixed(1)}–${s.depth.maxUm.toFixed(1)} µm` : '—'}
          sub={s.depth ? `spread ${um(s.depth.spreadUm)} · ${n(s.depth.reachingTarget)} of ${n(s.features.count)} reach ${s.limits.targetDepthUm} µm` : 'no openings'}
        />
        <Figure label="Flags" value={`${n(s.flags.bySeverity.error)} error${s.flags.bySeverity.error === 1 ? '' : 's'}`} sub={`${n(s.flags.bySeverity.warning)} warning${s.flags.bySeverity.warning === 1 ? '' : 's'} · ${n(s.flags.bySeverity.info)} info`} />
      </div>
      <div className="mt-5 grid gap-6 lg:grid-cols-2">
        <div className="overflow-x-auto">
          <table className="w-full text-left text-sm">
            <thead className="text-xs text-ink-500">
              <tr>
                <th className="py-1 pr-3 font-medium">window / step</th>
                <th className="py-1 pr-3 font-medium">min</th>
                <th className="py-1 pr-3 font-medium">max</th>
                <th className="py-1 pr-3 font-medium">mean</th>
                <th className="py-1 font-medium">max step</th>
              </tr>
            </thead>
            <tbody className="font-mono text-xs whitespace-nowrap">
              {s.windows.map((w) => (
                <tr key={`${w.windowUm}-${w.stepUm}`} className="border-t border-wafer-200">
                  <td className="py-1.5 pr-3">
                    {w.windowUm}/{w.stepUm} µm
                  </td>
                  <td className="py-1.5 pr-3">{pct(w.min)}</td>
                  <td className="py-1.5 pr-3">{pct(w.max)}</td>
                  <td className="py-1.5 pr-3">{pct(w.mean)}</td>
                  <td className="py-1.5">{pct(w.maxGradient)}</td>
                </tr>
              ))}
              <tr className="border-t border-wafer-200">
                <td className="py-1.5 pr-3">effective ({s.effectiveDensity.kernel}, L {s.effectiveDensity.lengthUm} µm)</td>
                <td className="py-1.5 pr-3">{pct(s.effectiveDensity.min)}</td>
                <td className="py-1.5 pr-3">{pct(s.effectiveDensity.max)}</td>
                <td className="py-1.5 pr-3" />
                <td className="py-1.5" />
              </tr>
            </tbody>
          </table>
        </div>
        <div className="overflow-x-auto">
          <table className="w-full text-left text-sm">
            <thead className="text-xs text-ink-500">
              <tr>
                <th className="py-1 pr-3 font-medium">flag kind</th>
                <th className="py-1 pr-3 font-medium">errors</th>
                <th className="py-1 pr-3 font-medium">warnings</th>
                <th className="py-1 font-medium">info</th>
              </tr>
            </thead>
            <tbody className="text-xs">
              {kinds.length === 0 ? (
                <tr>
                  <td colSpan={4} className="py-2 text-ink-500">
                    No limit crossed.
                  </td>
                </tr>
              ) : (
                kinds.map((k) => (
                  <tr key={k.kind} className="border-t border-wafer-200">
                    <td className="py-1.5 pr-3">{k.kind}</td>
                    <td className="py-1.5 pr-3 font-mono">{n(k.error)}</td>
                    <td className="py-1.5 pr-3 font-mono">{n(k.warning)}</td>
                    <td className="py-1.5 font-mono">{n(k.info)}</td>
                  </tr>
                ))
              )}
            </tbody>
          </table>
        </div>
      </div>
      {s.extrapolation.length > 0 ? (
        <ul className="mt-4 space-y-0.5 text-xs text-warn">
          {s.extrapolation.slice(0, 5).map((e) => (
            <li key={e.message}>
              {e.message} ({e.count.toLocaleString('en')} opening{e.count === 1 ? '' : 's'})
            </li>
          ))}
        </ul>
      ) : null}
      <p className="mt-4 rounded-md border border-warn/30 bg-warn/5 px-3 py-2 text-xs leading-relaxed text-ink-700" data-testid="caution">
        {s.caution}
      </p>
    </Card>
  );
}
