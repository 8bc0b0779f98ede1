'use client';

import { useMemo, useState } from 'react';
import { Area, CartesianGrid, ComposedChart, Legend, Line, ReferenceArea, ReferenceLine, ResponsiveContainer, Scatter, Tooltip, XAxis, YAxis } from 'recharts';
import { DEPTH_BAND_K, predictDepthUm, type CalibrationRow, type ProcessModel } from '@/lib/etch';
import { ardeCurve, depthVsDensity, depthVsWidth, linSpace, loadingCurve, logSpace, type CurvePoint } from '@/lib/models/calibration-curves';

const KIND_COLOUR = { trench: '#c0733f', hole: '#2f8279' } as const;
const BAND_OPACITY = 0.18;
const fmt = (v: number, d = 3) => (Number.isFinite(v) ? String(Number(v.toPrecision(d))) : '—');
const distinct = (v: number[]) => [...new Set(v)].sort((a, b) => a - b);

function ChartCard({ title, caption, children, testId }: { title: string; caption: string; children: React.ReactNode; testId: string }) {
  return (
    <figure className="rounded-md border border-wafer-200 bg-white p-3" data-testid={testId}>
      <figcaption className="mb-1">
        <span className="text-sm font-medium text-ink-900">{title}</span>
        <span className="block text-xs text-ink-500">{caption}</span>
      </figcaption>
      <div className="h-64 w-full">
        <ResponsiveContainer width="100%" height="100%">
          {children as React.ReactElement}
        </ResponsiveContainer>
      </div>
    </figure>
  );
}

function curveSeries(kind: 'trench' | 'hole', points: CurvePoint[], label: string) {
  return [
    <Area key={`${kind}-band`} data={points} dataKey="band" stroke="none" fill={KIND_COLOUR[kind]} fillOpacity={BAND_OPACITY} isAnimationActive={false} legendType="none" name={`${label} band`} />,
    <Line key={`${kind}-line`} data={points} dataKey="y" stroke={KIND_COLOUR[kind]} dot={false} strokeWidth={2} isAnimationActive={false} name={label} />,
  ];
}

const axisStyle = { fontSize: 11, fill: '#56687a' };

/**
 * The calibration plots: measured and predicted depth against width and against density (at a chosen time and
 * density / width), residuals, the ARDE curve and the loading curve, each model curve with its ±1.96 σ band.
 */
export function CalibrationPlots({ model, rows }: { model: ProcessModel; rows: CalibrationRow[] }) {
  const times = useMemo(() => distinct(rows.map((r) => r.timeMin)), [rows]);
  const densities = useMemo(() => distinct(rows.map((r) => r.density)), [rows]);
  const widths = useMemo(() => distinct(rows.map((r) => r.widthUm)), [rows]);
  const kinds = useMemo(() => (['trench', 'hole'] as const).filter((k) => rows.some((r) => r.kind === k)), [rows]);
  const [time, setTime] = useState(times[times.length - 1] ?? model.etch.timeMin);
  const [density, setDensity] = useState(densities[Math.floor((densities.length - 1) / 2)] ?? 0);
  const [width, setWidth] = useState(widths[Math.floor((widths.length - 1) / 2)] ?? 2);
  const densitySpread = densities.length > 1;
  const cal = model.calibration;

  const residuals = useMemo(
    () =>
      rows.map((r) => {
        const p = predictDepthUm(model, { widthUm: r.widthUm, kind: r.kind, effectiveDensity: r.density }, r.timeMin, { relTol: 1e-8 });
        return { ...r, predictedUm: p, residualUm: r.depthUm - p };
      }),
    [model, rows],
  );
  const wMin = Math.min(...widths) / 1.5;
  const wMax = Math.max(...widths) * 1.5;
  const byWidth = useMemo(() => kinds.map((k) => ({ kind: k, points: depthVsWidth(model, k, time, density, logSpace(wMin, wMax, 40)) })), [model, kinds, time, density, wMin, wMax]);
  const byDensity = useMemo(() => (densitySpread ? kinds.map((k) => ({ kind: k, points: depthVsDensity(model, k, time, width, linSpace(0, 1, 26)) })) : []), [model, kinds, time, width, densitySpread]);
  const arMax = Math.max(10, (cal?.aspectRatio[1] ?? 10) * 1.5);
  const arde = useMemo(() => kinds.map((k) => ({ kind: k, points: ardeCurve(model, k, linSpace(0, Math.min(arMax, model.etch.maxAspectRatio), 40)) })), [model, kinds, arMax]);
  const loading = useMemo(() => loadingCurve(model, linSpace(0, 1, 26)), [model]);
  const s = cal?.residualStandardErrorUm ?? Math.sqrt(residuals.reduce((a, r) => a + r.residualUm ** 2, 0) / Math.max(1, residuals.length));

  const measured = (k: 'trench' | 'hole', keep: (r: CalibrationRow) => boolean, x: (r: CalibrationRow) => number) =>
    residuals.filter((r) => r.kind === k && keep(r)).map((r) => ({ x: x(r), y: r.depthUm, line: r.line }));

  const select = (label: string, value: number, options: number[], set: (v: number) => void, unit: string, testId: string) => (
    <label className="flex items-center gap-1.5 text-xs text-ink-700">
      {label}
      <select className="rounded border border-wafer-300 bg-white px-1.5 py-0.5 text-xs" value={value} onChange={(e) => set(Number(e.target.value))} data-testid={testId}>
        {options.map((o) => (
          <option key={o} value={o}>
            {fmt(o)}
            {unit}
          </option>
        ))}
      </select>
    </label>
  );

  return (
    <div className="space-y-3" data-testid="calibration-plots">
      <div className="flex flex-wrap items-center gap-4 rounded-md bg-wafer-100 px-3 py-2">
        <span className="text-xs font-medium text-ink-800">Show the model at</span>
        {select('time', time, times, setTime, ' min', 'plot-time')}
        {select('density', density, densities, setDensity, '', 'plot-density')}
        {densitySpread ? select('width (density plot)', width, widths, setWidth, ' µm', 'plot-width') : null}
        <span className="text-xs text-ink-500">Shaded: ±{DEPTH_BAND_K} σ from the fitted parameters&rsquo; covariance (not wafer scatter, s = {fmt(s)} µm).</span>
      </div>
      <div className="grid gap-3 lg:grid-cols-2">
        <ChartCard testId="plot-depth-width" title="Depth against width" caption={`Predicted (lines) and measured (points) at ${fmt(time)} min, density ${fmt(density)}; log width axis.`}>
          <ComposedChart margin={{ top: 8, right: 12, bottom: 18, left: 4 }}>
            <CartesianGrid stroke="#e6e2d9" />
            <XAxis type="number" dataKey="x" scale="log" domain={[wMin, wMax]} allowDataOverflow ticks={widths} interval={0} tick={axisStyle} tickFormatter={(v: number) => fmt(v, 2)} label={{ value: 'width (µm)', position: 'insideBottom', offset: -10, style: axisStyle }} />
            <YAxis type="number" dataKey="y" tick={axisStyle} label={{ value: 'depth (µm)', angle: -90, position: 'insideLeft', style: axisStyle }} />
            <Tooltip formatter={(v: unknown) => (Array.isArray(v) ? v.map((x) => fmt(Number(x))).join(' – ') : fmt(Number(v)))} labelFormatter={(v: unknown) => `width ${fmt(Number(v))} µm`} />
            <Legend verticalAlign="top" height={24} wrapperStyle={{ fontSize: 11 }} />
            {byWidth.flatMap((c) => curveSeries(c.kind, c.points, `${c.kind} model`))}
            {kinds.map((k) => (
              <Scatter key={`${k}-m`} name={`${k} measured`} data={measured(k, (r) => r.timeMin === time && r.density === density, (r) => r.widthUm)} fill={KIND_COLOUR[k]} stroke="#111c26" isAnimationActive={false} />
            ))}
          </ComposedChart>
        </ChartCard>
        {densitySpread ? (
          <ChartCard testId="plot-depth-density" title="Depth against density" caption={`Predicted and measured at ${fmt(width)} µm width, ${fmt(time)} min.`}>
            <ComposedChart margin={{ top: 8, right: 12, bottom: 18, left: 4 }}>
              <CartesianGrid stroke="#e6e2d9" />
              <XAxis type="number" dataKey="x" domain={[0, 1]} tick={axisStyle} label={{ value: 'effective density', position: 'insideBottom', offset: -10, style: axisStyle }} />
              <YAxis type="number" dataKey="y" tick={axisStyle} label={{ value: 'depth (µm)', angle: -90, position: 'insideLeft', style: axisStyle }} />
              <Tooltip formatter={(v: unknown) => (Array.isArray(v) ? v.map((x) => fmt(Number(x))).join(' – ') : fmt(Number(v)))} labelFormatter={(v: unknown) => `density ${fmt(Number(v))}`} />
              <Legend verticalAlign="top" height={24} wrapperStyle={{ fontSize: 11 }} />
              {byDensity.flatMap((c) => curveSeries(c.kind, c.points, `${c.kind} model`))}
              {kinds.map((k) => (
                <Scatter key={`${k}-m`} name={`${k} measured`} data={measured(k, (r) => r.timeMin === time && r.widthUm === width, (r) => r.density)} fill={KIND_COLOUR[k]} stroke="#111c26" isAnimationActive={false} />
              ))}
            </ComposedChart>
          </ChartCard>
        ) : null}
        <ChartCard testId="plot-residuals" title="Residuals" caption={`Measured − predicted for every row; dashed lines at ±2 s (s = ${fmt(s)} µm).`}>
          <ComposedChart margin={{ top: 8, right: 12, bottom: 18, left: 4 }}>
            <CartesianGrid stroke="#e6e2d9" />
            <XAxis type="number" dataKey="x" scale="log" domain={[wMin, wMax]} allowDataOverflow ticks={widths} interval={0} tick={axisStyle} tickFormatter={(v: number) => fmt(v, 2)} label={{ value: 'width (µm)', position: 'insideBottom', offset: -10, style: axisStyle }} />
            <YAxis type="number" dataKey="y" tick={axisStyle} label={{ value: 'residual (µm)', angle: -90, position: 'insideLeft', style: axisStyle }} />
            <Tooltip formatter={(v: unknown) => fmt(Number(v))} />
            <Legend verticalAlign="top" height={24} wrapperStyle={{ fontSize: 11 }} />
            <ReferenceLine y={0} stroke="#28394a" />
            <ReferenceLine y={2 * s} stroke="#9aa8b5" strokeDasharray="4 3" />
            <ReferenceLine y={-2 * s} stroke="#9aa8b5" strokeDasharray="4 3" />
            {kinds.map((k) => (
              <Scatter key={k} name={k} data={residuals.filter((r) => r.kind === k).map((r) => ({ x: r.widthUm, y: r.residualUm, line: r.line }))} fill={KIND_COLOUR[k]} isAnimationActive={false} />
            ))}
          </ComposedChart>
        </ChartCard>
        <ChartCard testId="plot-arde" title="ARDE curve" caption="Rate at the bottom relative to a wide opening, against aspect ratio (loading excluded); shaded: calibrated AR range.">
          <ComposedChart margin={{ top: 8, right: 12, bottom: 18, left: 4 }}>
            <CartesianGrid stroke="#e6e2d9" />
            <XAxis type="number" dataKey="x" domain={[0, 'dataMax']} tick={axisStyle} tickFormatter={(v: number) => fmt(v, 2)} label={{ value: 'aspect ratio (depth / width)', position: 'insideBottom', offset: -10, style: axisStyle }} />
            <YAxis type="number" domain={[0, 1]} tick={axisStyle} label={{ value: 'R(AR) / R(0)', angle: -90, position: 'insideLeft', style: axisStyle }} />
            <Tooltip formatter={(v: unknown) => (Array.isArray(v) ? v.map((x) => fmt(Number(x))).join(' – ') : fmt(Number(v)))} labelFormatter={(v: unknown) => `AR ${fmt(Number(v))}`} />
            <Legend verticalAlign="top" height={24} wrapperStyle={{ fontSize: 11 }} />
            {cal ? <ReferenceArea x1={cal.aspectRatio[0]} x2={Math.min(cal.aspectRatio[1], arMax)} fill="#4fa39b" fillOpacity={0.08} /> : null}
            {arde.flatMap((c) => curveSeries(c.kind, c.points, c.kind))}
          </ComposedChart>
        </ChartCard>
        <ChartCard testId="plot-loading" title="Loading curve" caption="Local loading factor R/R_open against effective density; shaded: calibrated density range.">
          <ComposedChart margin={{ top: 8, right: 12, bottom: 18, left: 4 }}>
            <CartesianGrid stroke="#e6e2d9" />
            <XAxis type="number" dataKey="x" domain={[0, 1]} tick={axisStyle} label={{ value: 'effective density', position: 'insideBottom', offset: -10, style: axisStyle }} />
            <YAxis type="number" domain={[0, 1]} tick={axisStyle} label={{ value: 'R / R_open', angle: -90, position: 'insideLeft', style: axisStyle }} />
            <Tooltip formatter={(v: unknown) => (Array.isArray(v) ? v.map((x) => fmt(Number(x))).join(' – ') : fmt(Number(v)))} labelFormatter={(v: unknown) => `density ${fmt(Number(v))}`} />
            {cal ? <ReferenceArea x1={cal.density[0]} x2={cal.density[1]} fill="#4fa39b" fillOpacity={0.08} /> : null}
            <Area data={loading} dataKey="band" stroke="none" fill="#56687a" fillOpacity={BAND_OPACITY} isAnimationActive={false} legendType="none" />
            <Line data={loading} dataKey="y" stroke="#28394a" dot={false} strokeWidth={2} isAnimationActive={false} name="loading factor" />
          </ComposedChart>
        </ChartCard>
      </div>
    </div>
  );
}
