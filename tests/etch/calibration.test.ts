import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { CalibrationCsvError, fitCalibration, parseCalibrationCsv, predictFeature, type CalibrationRow } from '@/lib/etch';
import { DEMO_NOISE_UM, DEMO_TRUTH, demoRows, demoTruthModel, gaussian, mulberry32 } from '@/samples/calibration/make-demo-csv';
import { testModel } from './helpers';

const withLines = (rows: Omit<CalibrationRow, 'line'>[]): CalibrationRow[] => rows.map((r, i) => ({ ...r, line: i + 2 }));
const startModel = () => {
  const t = demoTruthModel();
  return { ...t, openRateUmPerMin: 2, reactionProbability: 0.6, loading: { ...t.loading, coefficient: 0.1 } };
};

describe('fitCalibration — Levenberg–Marquardt (ml-levenberg-marquardt)', () => {
  it('recovers the known open rate, S and κ from the shipped demo CSV within 3 standard errors', () => {
    // Synthetic data from a known model + Gaussian noise (samples/calibration/make-demo-csv.ts, fixed seed):
    // a correct fit with correct linearised errors lands within 3 SE of the truth (99.7 % for each parameter).
    const rows = parseCalibrationCsv(readFileSync(new URL('../../samples/calibration/demo-trench-lag.csv', import.meta.url), 'utf8'));
    const fit = fitCalibration(rows, { baseModel: startModel(), fit: ['openRateUmPerMin', 'reactionProbability', 'loadingCoefficient'], date: '2026-12-02' });
    expect(fit.ok).toBe(true);
    if (!fit.ok) return;
    const truth = { openRateUmPerMin: DEMO_TRUTH.openRateUmPerMin, reactionProbability: DEMO_TRUTH.reactionProbability, loadingCoefficient: DEMO_TRUTH.loadingCoefficient };
    for (const [name, value] of Object.entries(truth)) {
      const p = fit.parameters[name as keyof typeof truth];
      expect(p?.standardError).toBeGreaterThan(0);
      expect(Math.abs((p?.value ?? NaN) - value)).toBeLessThan(3 * (p?.standardError ?? 0));
    }
    // Residual standard error estimates the injected noise (σ = 0.4 µm) — within 25 % for 137 degrees of freedom.
    expect(Math.abs(fit.residualStandardErrorUm / DEMO_NOISE_UM - 1)).toBeLessThan(0.25);
    expect(fit.rSquared).toBeGreaterThan(0.99);
    expect(fit.residuals).toHaveLength(140);
    expect(fit.residuals[0]?.line).toBe(5);
    expect(fit.model.calibration?.date).toBe('2026-12-02');
    expect(fit.model.calibration?.widthUm).toEqual([1, 400]);
    expect(fit.model.calibration?.density).toEqual([0.02, 0.6]);
    expect(fit.model.calibration?.kinds).toEqual(['hole', 'trench']);
  });
  it('recovers open rate and S for three other noise seeds within 3 standard errors (κ held at its true value)', () => {
    for (const seed of [1, 2, 3]) {
      const rows = withLines(demoRows(seed, 0.3));
      const base = { ...startModel(), loading: demoTruthModel().loading };
      const fit = fitCalibration(rows, { baseModel: base, date: '2026-12-02' });
      if (!fit.ok) throw new Error(fit.message);
      const r = fit.parameters.openRateUmPerMin;
      const s = fit.parameters.reactionProbability;
      expect(Math.abs((r?.value ?? NaN) - DEMO_TRUTH.openRateUmPerMin)).toBeLessThan(3 * (r?.standardError ?? 0));
      expect(Math.abs((s?.value ?? NaN) - DEMO_TRUTH.reactionProbability)).toBeLessThan(3 * (s?.standardError ?? 0));
    }
  });
  it('standard error equals the regression-through-the-origin formula in the linear (no-lag) case', () => {
    // With S → 0 depth = R·t, a linear model: R̂ = Σty/Σt², SE = √(SSR/(n − 1)/Σt²)
    // (ordinary least squares through the origin; standard textbook result, e.g. Draper & Smith [from memory]).
    const noise = gaussian(mulberry32(7));
    const rows = withLines([4, 6, 8, 10, 12, 14].map((t, i) => ({ widthUm: 2 + i, kind: 'trench' as const, density: 0, timeMin: t, depthUm: 1.7 * t + 0.2 * noise() })));
    const base = testModel({ reactionProbability: 1e-9, etch: { timeMin: 10, targetDepthUm: 500, toleranceUm: 1, maxAspectRatio: 100 } });
    const fit = fitCalibration(rows, { baseModel: base, fit: ['openRateUmPerMin'] });
    if (!fit.ok) throw new Error(fit.message);
    const stt = rows.reduce((s, r) => s + r.timeMin ** 2, 0);
    const rHat = rows.reduce((s, r) => s + r.timeMin * r.depthUm, 0) / stt;
    const ssr = rows.reduce((s, r) => s + (r.depthUm - rHat * r.timeMin) ** 2, 0);
    expect(fit.parameters.openRateUmPerMin?.value).toBeCloseTo(rHat, 6);
    expect(fit.parameters.openRateUmPerMin?.standardError).toBeCloseTo(Math.sqrt(ssr / 5 / stt), 5);
  });
  it('refuses underdetermined fits and says what data is missing', () => {
    const one = withLines([1, 2, 3].map((t) => ({ widthUm: 2, kind: 'trench' as const, density: 0.2, timeMin: 5 * t, depthUm: 8 * t })));
    const r1 = fitCalibration(one, { baseModel: startModel() });
    expect(r1).toEqual({ ok: false, message: 'cannot calibrate: need at least two distinct widths to separate open rate from reaction probability' });
    const two = withLines([{ widthUm: 1, kind: 'trench', density: 0.2, timeMin: 5, depthUm: 7 }, { widthUm: 3, kind: 'trench', density: 0.2, timeMin: 5, depthUm: 9 }]);
    const r2 = fitCalibration(two, { baseModel: startModel() });
    expect(r2.ok).toBe(false);
    if (!r2.ok) expect(r2.message).toMatch(/need more measurements than fitted parameters \(2 rows for 2 parameters/);
    const flat = withLines([1, 2, 4, 8].map((w) => ({ widthUm: w, kind: 'trench' as const, density: 0.3, timeMin: 5, depthUm: 5 + w })));
    const r3 = fitCalibration(flat, { baseModel: startModel(), fit: ['openRateUmPerMin', 'reactionProbability', 'loadingCoefficient'] });
    expect(r3.ok).toBe(false);
    if (!r3.ok) expect(r3.message).toMatch(/different local densities/);
  });
  it('the fitted model warns when a prediction leaves the calibrated ranges', () => {
    const fit = fitCalibration(withLines(demoRows(11, 0.3)), { baseModel: { ...startModel(), loading: demoTruthModel().loading }, date: '2026-12-02' });
    if (!fit.ok) throw new Error(fit.message);
    expect(predictFeature(fit.model, { widthUm: 5, kind: 'trench', effectiveDensity: 0.3 }).warnings.filter((w) => /calibrat/.test(w))).toEqual([]);
    expect(predictFeature(fit.model, { widthUm: 800, kind: 'trench', effectiveDensity: 0.3 }).warnings.join(' ')).toMatch(/outside the calibrated range 1–400 µm/);
  });
});

describe('demo calibration CSV', () => {
  it('is exactly what samples/calibration/make-demo-csv.ts generates (seeded), so it can be regenerated', () => {
    const shipped = parseCalibrationCsv(readFileSync(new URL('../../samples/calibration/demo-trench-lag.csv', import.meta.url), 'utf8'));
    expect(shipped.map(({ line: _line, ...r }) => r)).toEqual(demoRows());
  });
});

describe('parseCalibrationCsv', () => {
  const header = 'width_um,kind,density,time_min,depth_um';
  it('reads rows with line numbers, comments, blank lines, extra columns and any column order', () => {
    const rows = parseCalibrationCsv(`# demo\nkind,width_um,depth_um,time_min,density,note\ntrench,2,20.5,10,0.3,a\n\nhole,4,18,10,0.1,"b, c"\n`);
    expect(rows).toEqual([
      { line: 3, widthUm: 2, kind: 'trench', density: 0.3, timeMin: 10, depthUm: 20.5 },
      { line: 5, widthUm: 4, kind: 'hole', density: 0.1, timeMin: 10, depthUm: 18 },
    ]);
  });
  it('names the line and field of bad values', () => {
    expect(() => parseCalibrationCsv(`${header}\n2,trench,0.3,10,20\n2,slot,0.3,10,20\n`)).toThrow('line 3: kind must be trench or hole, got "slot"');
    expect(() => parseCalibrationCsv(`${header}\n2,trench,1.3,10,20\n`)).toThrow('line 2: density must be a number in [0, 1], got "1.3"');
    expect(() => parseCalibrationCsv(`${header}\nx,trench,0.3,10,20\n`)).toThrow('line 2: width_um must be a number > 0, got "x"');
    expect(() => parseCalibrationCsv(`${header}\n2,trench,0.3,,20\n`)).toThrow('line 2: time_min must be a number > 0, got ""');
  });
  it('reports a short row, a missing column and an empty file', () => {
    expect(() => parseCalibrationCsv(`${header}\n2,trench,0.3,10\n`)).toThrow(/^line 2: /);
    expect(() => parseCalibrationCsv('width_um,kind,time_min,depth_um\n2,trench,10,20\n')).toThrow('line 1: missing column(s) density');
    expect(() => parseCalibrationCsv('')).toThrow(CalibrationCsvError);
  });
});
