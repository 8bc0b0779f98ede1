'use client';

import { useRouter } from 'next/navigation';
import { useMemo, useRef, useState } from 'react';
import { Button } from '@/components/ui/button';
import { FormAlert } from '@/components/ui/field';
import { ApiClientError, apiJson } from '@/components/pipeline/api-client';
import { fitCalibration, parseCalibrationCsvReport, type CalibrationCsvReport, type CalibrationFit, type CalibrationRow, type FitParameter, type ProcessModel } from '@/lib/etch';
import type { StoredCalibration } from '@/lib/models/schemas';
import { CalibrationPlots } from './calibration-plots';

const FIT_LABEL: Record<FitParameter, { label: string; unit: string; help: string }> = {
  openRateUmPerMin: { label: 'Open-field etch rate', unit: 'µm/min', help: 'Sets the depth of wide openings.' },
  reactionProbability: { label: 'Reaction probability S', unit: '', help: 'Sets how much narrow openings lag; needs two or more widths.' },
  loadingCoefficient: { label: 'Local loading coefficient κ', unit: '', help: 'Sets how much dense regions slow down; needs several densities.' },
};

const TEMPLATE = [
  '# Trenchant calibration measurements — one measured test structure per row.',
  '# width_um: drawn width (trench) or diameter (hole), µm; kind: trench or hole; density: effective open density 0–1',
  '# around the structure; time_min: etch time; depth_um: measured depth at the feature centre (e.g. SEM cross-section).',
  '# Lines starting with # are comments; extra columns (wafer, site, note) are ignored. Example rows are invented.',
  'width_um,kind,density,time_min,depth_um,wafer',
  '2,trench,0.30,10,21.5,W01',
  '5,trench,0.30,10,27.9,W01',
  '10,hole,0.30,10,24.2,W01',
  '',
].join('\n');

const TYPED_NAME = 'typed measurements';
const TYPED_START = 'width_um,kind,density,time_min,depth_um\n';

const fmt = (v: number | null | undefined, d = 4) => (v === null || v === undefined || !Number.isFinite(v) ? '—' : String(Number(v.toPrecision(d))));

type FitState = { kind: 'none' } | { kind: 'refused'; message: string } | { kind: 'done'; fit: CalibrationFit; fileName: string; fitted: FitParameter[] };

/**
 * Calibration of a draft in the browser: drop or choose a CSV of measured depths (line-numbered errors), choose the
 * parameters to fit, run the fit (lib/etch/calibrate.ts, Levenberg–Marquardt), look at the plots and the fitted
 * values, then store the fitted model in the draft. For a published version, the stored calibration is shown.
 */
export function CalibrationPanel({ versionId, document, stored, editable }: { versionId: string; document: ProcessModel; stored: StoredCalibration | null; editable: boolean }) {
  const router = useRouter();
  const [report, setReport] = useState<(CalibrationCsvReport & { fileName: string }) | null>(null);
  const [fitParams, setFitParams] = useState<FitParameter[]>(['openRateUmPerMin', 'reactionProbability']);
  const [state, setState] = useState<FitState>({ kind: 'none' });
  const [busy, setBusy] = useState<'fit' | 'save' | null>(null);
  const [message, setMessage] = useState<{ text: string; tone: 'error' | 'success' } | undefined>();
  const [dragging, setDragging] = useState(false);
  const input = useRef<HTMLInputElement>(null);
  const templateHref = useMemo(() => `data:text/csv;charset=utf-8,${encodeURIComponent(TEMPLATE)}`, []);

  const [typed, setTyped] = useState(TYPED_START);
  const load = async (file: File) => {
    setMessage(undefined);
    setState({ kind: 'none' });
    if (file.size > 5 * 1024 * 1024) {
      setReport({ rows: [], errors: [{ line: null, message: `${file.name} is ${(file.size / 1048576).toFixed(1)} MiB; calibration files are limited to 5 MiB` }], errorsTruncated: false, fileName: file.name });
      return;
    }
    loadText(await file.text(), file.name);
  };
  // A handful of SEM measurements need no file: typed rows go through the same parser, and errors name their line.
  const loadText = (text: string, fileName: string) => {
    setMessage(undefined);
    setState({ kind: 'none' });
    const r = parseCalibrationCsvReport(text);
    setReport({ ...r, fileName });
    const spread = r.rows.length ? Math.max(...r.rows.map((x) => x.density)) - Math.min(...r.rows.map((x) => x.density)) : 0;
    setFitParams(spread >= 0.05 ? ['openRateUmPerMin', 'reactionProbability', 'loadingCoefficient'] : ['openRateUmPerMin', 'reactionProbability']);
  };

  const run = () => {
    if (!report || report.errors.length > 0) return;
    setBusy('fit');
    setMessage(undefined);
    // Let the "Fitting…" state paint before the (synchronous, ~1 s) fit blocks the page.
    setTimeout(() => {
      try {
        const r = fitCalibration(report.rows, { baseModel: document, fit: fitParams, source: report.fileName });
        setState(r.ok ? { kind: 'done', fit: r, fileName: report.fileName, fitted: fitParams } : { kind: 'refused', message: r.message });
      } catch (err) {
        setState({ kind: 'refused', message: `The fit failed: ${(err as Error).message}` });
      } finally {
        setBusy(null);
      }
    }, 30);
  };

  const save = async () => {
    if (state.kind !== 'done') return;
    const f = state.fit;
    const calibration: StoredCalibration = {
      fileName: state.fileName,
      fit: state.fitted,
      rows: report?.rows ?? [],
      rSquared: Number.isFinite(f.rSquared) ? f.rSquared : null,
      rmsResidualUm: f.rmsResidualUm,
      residualStandardErrorUm: Number.isFinite(f.residualStandardErrorUm) ? f.residualStandardErrorUm : null,
      degreesOfFreedom: f.degreesOfFreedom,
      parameters: f.parameters as StoredCalibration['parameters'],
      warnings: f.warnings,
    };
    setBusy('save');
    try {
      await apiJson(`/api/v1/model-versions/${versionId}`, { method: 'PATCH', json: { document: f.model, calibration } });
      setMessage({ text: 'Fitted values and the calibration are saved in this draft. Publish it to make it available to analyses.', tone: 'success' });
      setState({ kind: 'none' });
      setReport(null);
      router.refresh();
    } catch (e) {
      setMessage({ text: e instanceof ApiClientError ? e.message : String(e), tone: 'error' });
    } finally {
      setBusy(null);
    }
  };

  const shownModel: ProcessModel | null = state.kind === 'done' ? state.fit.model : stored ? document : null;
  const shownRows: CalibrationRow[] | null = state.kind === 'done' ? (report?.rows ?? null) : stored ? stored.rows : null;
  const shownParams = state.kind === 'done' ? state.fit.parameters : stored?.parameters;
  const cal = shownModel?.calibration;

  return (
    <div className="space-y-5">
      {editable ? (
        <div className="space-y-4">
          <div
            className={`flex flex-col items-center justify-center gap-2 rounded-lg border-2 border-dashed px-6 py-8 text-center transition-colors ${dragging ? 'border-copper-500 bg-copper-300/10' : 'border-wafer-300 bg-wafer-50'}`}
            onDragOver={(e) => {
              e.preventDefault();
              setDragging(true);
            }}
            onDragLeave={() => setDragging(false)}
            onDrop={(e) => {
              e.preventDefault();
              setDragging(false);
              const file = e.dataTransfer.files[0];
              if (file) void load(file);
            }}
            data-testid="calibration-drop"
          >
            <p className="text-sm text-ink-800">Drop a CSV of measured depths here, or</p>
            <Button type="button" variant="secondary" onClick={() => input.current?.click()}>
              Choose a file…
            </Button>
            <input ref={input} type="file" accept=".csv,text/csv" className="hidden" data-testid="calibration-file" onChange={(e) => e.target.files?.[0] && void load(e.target.files[0])} />
            <p className="text-xs text-ink-500">
              Columns width_um, kind, density, time_min, depth_um.{' '}
              <a href={templateHref} download="trenchant-calibration-template.csv" className="text-copper-600 hover:underline" data-testid="calibration-template">
                Download the template
              </a>
            </p>
          </div>
          <details className="rounded-md border border-wafer-200 bg-white px-3 py-2 text-sm" data-testid="calibration-typed">
            <summary className="cursor-pointer text-ink-800">Or type the measurements (one row per measured feature)</summary>
            <div className="mt-2 space-y-2">
              <label htmlFor="calibration-rows" className="block text-xs text-ink-500">
                Same columns as the file: width in µm, trench or hole, effective density 0–1, etch time in min, measured depth in µm.
              </label>
              <textarea
                id="calibration-rows"
                value={typed}
                onChange={(e) => setTyped(e.target.value)}
                rows={7}
                spellCheck={false}
                className="block w-full rounded-md border border-wafer-300 bg-white px-3 py-2 font-mono text-xs text-ink-900 focus:border-copper-500 focus:outline-none focus:ring-2 focus:ring-copper-400/30"
                data-testid="calibration-rows"
              />
              <Button type="button" variant="secondary" onClick={() => loadText(typed, TYPED_NAME)} data-testid="calibration-use-rows">
                Check these rows
              </Button>
            </div>
          </details>

          {report ? (
            <div className="space-y-3">
              <p className="text-sm text-ink-700" data-testid="calibration-summary">
                <span className="font-medium">{report.fileName}</span>: {report.rows.length} usable {report.rows.length === 1 ? 'row' : 'rows'}
                {report.errors.length ? `, ${report.errors.length}${report.errorsTruncated ? '+' : ''} with errors` : ''}.
              </p>
              {report.errors.length ? (
                <div className="rounded-md border border-fail/30 bg-fail/5 p-3" role="alert">
                  <p className="text-sm font-medium text-fail">Fix these rows and {report.fileName === TYPED_NAME ? 'check them' : 'load the file'} again; nothing is fitted while any row is wrong.</p>
                  <ul className="mt-1 max-h-48 space-y-0.5 overflow-auto font-mono text-xs text-fail" data-testid="calibration-errors">
                    {report.errors.map((e, i) => (
                      <li key={i}>{e.message}</li>
                    ))}
                    {report.errorsTruncated ? <li>… more errors not listed</li> : null}
                  </ul>
                </div>
              ) : (
                <fieldset className="space-y-2">
                  <legend className="text-sm font-medium text-ink-800">Parameters to fit</legend>
                  <div className="flex flex-wrap gap-2">
                    {(Object.keys(FIT_LABEL) as FitParameter[]).map((p) => {
                      const on = fitParams.includes(p);
                      return (
                        <label key={p} className={`flex cursor-pointer items-start gap-2 rounded-md px-3 py-2 text-sm ring-1 ${on ? 'bg-copper-400/10 ring-copper-500/50' : 'bg-white ring-wafer-300'}`}>
                          <input type="checkbox" className="mt-0.5" checked={on} onChange={() => setFitParams(on ? fitParams.filter((x) => x !== p) : [...fitParams, p])} data-testid={`fit-${p}`} />
                          <span>
                            {FIT_LABEL[p].label}
                            <span className="block text-xs text-ink-500">{FIT_LABEL[p].help}</span>
                          </span>
                        </label>
                      );
                    })}
                  </div>
                  <p className="text-xs text-ink-500">Other parameters keep this draft&rsquo;s values. The loading kernel length is not fitted: the densities in the file are taken as already smoothed.</p>
                  <Button type="button" onClick={run} disabled={busy !== null} data-testid="run-fit">
                    {busy === 'fit' ? 'Fitting…' : 'Run the fit'}
                  </Button>
                </fieldset>
              )}
            </div>
          ) : null}
          {state.kind === 'refused' ? (
            <p role="alert" className="rounded-md border border-warn/40 bg-warn/10 px-3 py-2 text-sm text-ink-900" data-testid="fit-refused">
              {state.message.replace(/^cannot calibrate: /, 'Cannot calibrate: ')}.
            </p>
          ) : null}
        </div>
      ) : null}
      <FormAlert message={message?.text} tone={message?.tone} />

      {shownModel && shownRows && shownParams ? (
        <div className="space-y-4" data-testid="calibration-result">
          <div className="flex flex-wrap items-baseline justify-between gap-2">
            <h3 className="text-sm font-semibold text-ink-900">{state.kind === 'done' ? 'Fit result (not saved yet)' : `Calibration${stored ? ` from ${stored.fileName}` : ''}`}</h3>
            {state.kind === 'done' && editable ? (
              <Button type="button" onClick={save} disabled={busy !== null} data-testid="save-fit">
                {busy === 'save' ? 'Saving…' : 'Save the fitted values in this draft'}
              </Button>
            ) : null}
          </div>
          <div className="grid gap-4 lg:grid-cols-[3fr_2fr]">
            <table className="w-full text-sm" data-testid="fit-parameters">
              <thead>
                <tr className="border-b border-wafer-200 text-left text-xs text-ink-500">
                  <th className="py-1.5 font-medium">Parameter</th>
                  <th className="py-1.5 text-right font-medium">Fitted value</th>
                  <th className="py-1.5 text-right font-medium">Standard error</th>
                  {state.kind === 'done' ? <th className="py-1.5 text-right font-medium">Before</th> : null}
                </tr>
              </thead>
              <tbody>
                {Object.entries(shownParams).map(([name, p]) => {
                  const meta = FIT_LABEL[name as FitParameter];
                  const before = name === 'openRateUmPerMin' ? document.openRateUmPerMin : name === 'reactionProbability' ? document.reactionProbability : document.loading.coefficient;
                  return (
                    <tr key={name} className="border-b border-wafer-100">
                      <td className="py-1.5">
                        {meta?.label ?? name} {meta?.unit ? <span className="text-xs text-ink-500">({meta.unit})</span> : null}
                      </td>
                      <td className="py-1.5 text-right font-mono">{fmt(p?.value)}</td>
                      <td className="py-1.5 text-right font-mono">{p?.standardError === null || p?.standardError === undefined ? (p?.atBound ? 'at bound' : '—') : `± ${fmt(p.standardError, 2)}`}</td>
                      {state.kind === 'done' ? <td className="py-1.5 text-right font-mono text-ink-500">{fmt(before)}</td> : null}
                    </tr>
                  );
                })}
              </tbody>
            </table>
            <dl className="grid grid-cols-2 gap-x-4 gap-y-1 text-sm" data-testid="fit-statistics">
              <dt className="text-ink-500">R²</dt>
              <dd className="font-mono">{fmt(cal?.rSquared ?? null, 4)}</dd>
              <dt className="text-ink-500">RMS residual</dt>
              <dd className="font-mono">{fmt(cal?.rmsResidualUm ?? null, 3)} µm</dd>
              <dt className="text-ink-500">Points</dt>
              <dd className="font-mono">{cal?.pointCount ?? shownRows.length}</dd>
              <dt className="text-ink-500">Calibrated widths</dt>
              <dd className="font-mono">{cal ? `${fmt(cal.widthUm[0])}–${fmt(cal.widthUm[1])} µm` : '—'}</dd>
              <dt className="text-ink-500">Aspect ratios</dt>
              <dd className="font-mono">{cal ? `${fmt(cal.aspectRatio[0], 3)}–${fmt(cal.aspectRatio[1], 3)}` : '—'}</dd>
              <dt className="text-ink-500">Densities</dt>
              <dd className="font-mono">{cal ? `${fmt(cal.density[0] * 100, 3)}–${fmt(cal.density[1] * 100, 3)} %` : '—'}</dd>
              <dt className="text-ink-500">Kinds</dt>
              <dd>{cal?.kinds?.join(', ') ?? '—'}</dd>
              <dt className="text-ink-500">Date</dt>
              <dd>{cal?.date ?? '—'}</dd>
            </dl>
          </div>
          {(state.kind === 'done' ? state.fit.warnings : (stored?.warnings ?? [])).map((w) => (
            <p key={w} className="rounded-md bg-warn/10 px-3 py-1.5 text-xs text-ink-800">
              {w}
            </p>
          ))}
          <p className="text-xs text-ink-500">
            Standard errors are the usual linearised ones, s²(JᵀJ)⁻¹, assuming independent measurement noise of equal size. Predictions outside the calibrated
            widths, aspect ratios and densities are flagged as extrapolation in analyses.
          </p>
          <CalibrationPlots model={shownModel} rows={shownRows} />
        </div>
      ) : !editable ? (
        <p className="text-sm text-ink-500">This version has no calibration: its predictions are uncalibrated estimates.</p>
      ) : null}
    </div>
  );
}
