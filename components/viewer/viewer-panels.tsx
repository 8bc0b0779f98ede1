'use client';

import { gradientCss, type ScaleName } from '@/lib/viewer/color-scale';
import { formatValue, mapKindInfo, mapVariantLabel } from '@/lib/viewer/map-kinds';
import type { WhatIfParams } from '@/lib/viewer/whatif';
import { markStyle } from './flag-marks';

export function Legend(props: { mapName: string; kind: string; scale: ScaleName; lo: number; hi: number; dataRange: [number, number] | null; whatIf: boolean; onLimits: (lo: number, hi: number) => void; onReset: () => void }) {
  const info = mapKindInfo(props.kind);
  return (
    <div className="rounded border border-wafer-200 bg-white p-3 text-xs" data-testid="legend" data-map={props.mapName} data-lo={props.lo} data-hi={props.hi}>
      <p className="font-semibold text-ink-900" data-testid="legend-title">
        {info.label} {props.whatIf ? <span className="ml-1 rounded bg-copper-600 px-1 text-white">what-if</span> : null}
      </p>
      <p className="text-ink-500" data-testid="legend-unit">
        {[mapVariantLabel(props.mapName, props.kind), info.unit === 'fraction' ? 'open-area fraction (1 = 100 %)' : info.unit].filter(Boolean).join(' · ')}
      </p>
      <div className="mt-2 h-3 w-full rounded-sm border border-ink-900/20" style={{ background: gradientCss(props.scale) }} aria-hidden />
      <div className="mt-1 flex items-center justify-between gap-2">
        <label className="flex items-center gap-1">
          <span className="sr-only">lower limit</span>
          <input type="number" step="any" className="w-20 rounded border border-wafer-300 px-1 font-mono" value={Number(props.lo.toPrecision(4))} onChange={(e) => props.onLimits(Number(e.target.value), props.hi)} data-testid="legend-lo" />
        </label>
        <button type="button" className="text-ink-500 underline" onClick={props.onReset} title="limits from the data">
          auto
        </button>
        <label className="flex items-center gap-1">
          <span className="sr-only">upper limit</span>
          <input type="number" step="any" className="w-20 rounded border border-wafer-300 px-1 text-right font-mono" value={Number(props.hi.toPrecision(4))} onChange={(e) => props.onLimits(props.lo, Number(e.target.value))} data-testid="legend-hi" />
        </label>
      </div>
      <p className="mt-1 text-ink-500">
        data {props.dataRange ? `${formatValue(props.dataRange[0], '')} … ${formatValue(props.dataRange[1], '')}` : 'has no values'}; values outside the limits take the end colours
        {info.note ? `; ${info.note}` : ''}. Scale: {props.scale} (perceptually uniform).
      </p>
    </div>
  );
}

export function MarkKey() {
  return (
    <div className="flex flex-wrap gap-3 text-xs text-ink-700" aria-label="flag marks">
      {(['error', 'warning', 'info'] as const).map((s) => {
        const st = markStyle(s);
        return (
          <span key={s} className="flex items-center gap-1">
            <svg width="14" height="14" viewBox="-8 -8 16 16" aria-hidden>
              {st.shape === 'triangle' ? <polygon points="0,-7 6,5 -6,5" fill={st.css} stroke="#111" /> : st.shape === 'diamond' ? <polygon points="0,-6 6,0 0,6 -6,0" fill={st.css} stroke="#111" /> : <circle r="5" fill={st.css} stroke="#111" />}
            </svg>
            {st.label}
          </span>
        );
      })}
    </div>
  );
}

const unitText = (u: string) => (u === 'fraction' ? '' : u === 'um' ? 'µm' : u);

export type ReadoutRow = { name: string; kind: string; value: number; unit: string; whatIf: boolean };

export function Readout({ at, rows }: { at: [number, number] | null; rows: ReadoutRow[] }) {
  return (
    <div className="rounded border border-wafer-200 bg-white p-3 text-xs" data-testid="readout">
      <p className="font-semibold text-ink-900">Under the cursor</p>
      <p className="font-mono text-ink-700" data-testid="cursor-um">
        {at ? `x ${at[0].toFixed(2)} µm, y ${at[1].toFixed(2)} µm` : 'move over the map'}
      </p>
      <table className="mt-1 w-full font-mono">
        <tbody>
          {rows.map((r) => (
            <tr key={r.name} data-testid={`readout-${r.name}`} data-value={Number.isFinite(r.value) ? r.value : ''}>
              <td className="pr-2 font-sans text-ink-500">
                {mapKindInfo(r.kind).label}
                {r.name !== r.kind ? <span className="text-ink-500"> ({mapVariantLabel(r.name, r.kind)})</span> : null}
                {r.whatIf ? ' *' : ''}
              </td>
              <td className="text-right whitespace-nowrap text-ink-900">{at ? formatValue(r.value, r.unit) : '—'}</td>
              <td className="pl-1 font-sans text-ink-500">{unitText(r.unit)}</td>
            </tr>
          ))}
        </tbody>
      </table>
      {rows.some((r) => r.whatIf) ? <p className="mt-1 text-ink-500">* what-if value, not the stored analysis</p> : null}
    </div>
  );
}

const SLIDERS: { key: keyof WhatIfParams; label: string; unit: string; min: number; max: number }[] = [
  { key: 'timeMin', label: 'Etch time', unit: 'min', min: 0.25, max: 4 },
  { key: 'openRateUmPerMin', label: 'Open-field rate', unit: 'µm/min', min: 0.5, max: 2 },
  { key: 'reactionProbability', label: 'Reaction probability S', unit: '', min: 0.25, max: 4 },
  { key: 'loadingCoefficient', label: 'Microloading κ', unit: '', min: 0, max: 3 },
];

/** Sliders as multiples of the stored value (κ as an absolute span, since it may be 0). */
export function WhatIfPanel(props: { base: WhatIfParams; params: WhatIfParams; onChange: (p: WhatIfParams) => void; onReset: () => void; active: boolean; status: string }) {
  return (
    <div className={`rounded border p-3 text-xs ${props.active ? 'border-copper-600 bg-copper-300/15' : 'border-wafer-200 bg-white'}`} data-testid="whatif-panel">
      <p className="font-semibold text-ink-900">What-if (in the browser, not saved)</p>
      {SLIDERS.map((s) => {
        const base = props.base[s.key];
        const absolute = s.key === 'loadingCoefficient';
        const lo = absolute ? 0 : base * s.min;
        const hi = absolute ? Math.max(1, base * s.max) : base * s.max;
        const v = props.params[s.key];
        return (
          <label key={s.key} className="mt-2 block">
            <span className="flex justify-between text-ink-700">
              <span>{s.label}</span>
              <span className="font-mono" data-testid={`whatif-value-${s.key}`}>
                {Number(v.toPrecision(4))} {s.unit} {v !== base ? <span className="text-ink-500">(stored {Number(base.toPrecision(4))})</span> : null}
              </span>
            </span>
            <input type="range" className="w-full" min={lo} max={hi} step={(hi - lo) / 200} value={v} onChange={(e) => props.onChange({ ...props.params, [s.key]: Number(e.target.value) })} data-testid={`whatif-${s.key}`} />
          </label>
        );
      })}
      <div className="mt-2 flex items-center justify-between">
        <span className="text-ink-500" data-testid="whatif-status">
          {props.status}
        </span>
        <button type="button" className="text-ink-700 underline" onClick={props.onReset} disabled={!props.active}>
          back to stored
        </button>
      </div>
      <p className="mt-1 text-ink-500">
        Recomputes predicted depth, depth margin, risk and the opening flags from the stored widths and effective densities. The effective density itself is not recomputed (it depends on the kernel length, not on these). Advisory only: “Save as new analysis” runs the full analysis with these values to keep a result.
      </p>
    </div>
  );
}
