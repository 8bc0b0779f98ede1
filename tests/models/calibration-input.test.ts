import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { fitCalibration, parseCalibrationCsv, parseCalibrationCsvReport, parseProcessModel } from '@/lib/etch';
import { testModel } from '../etch/helpers';

const HEADER = 'width_um,kind,density,time_min,depth_um';

describe('calibration CSV — every bad row named by its line', () => {
  it('lists each bad row with its line number and keeps the good rows', () => {
    const text = [
      '# invented test data',
      HEADER,
      '2,trench,0.3,10,25', // line 3 good
      '2,slot,0.3,10,25', // line 4 bad kind
      '-1,trench,0.3,10,25', // line 5 bad width
      '', // blank, skipped (line 6)
      '4,hole,1.4,10,25', // line 7 density out of range
      '4,hole,0.2,0,25', // line 8 time 0
      '4,hole,0.2,10,abc', // line 9 depth not a number
      '8,trench,0.2,10,30', // line 10 good
    ].join('\n');
    const r = parseCalibrationCsvReport(text);
    expect(r.rows.map((x) => x.line)).toEqual([3, 10]);
    expect(r.errors.map((e) => e.line)).toEqual([4, 5, 7, 8, 9]);
    expect(r.errors[0]?.message).toBe('line 4: kind must be trench or hole, got "slot"');
    expect(r.errors[1]?.message).toMatch(/^line 5: width_um must be a number > 0, got "-1"/);
    expect(r.errors[2]?.message).toMatch(/^line 7: density must be a number in \[0, 1\]/);
    expect(r.errors[3]?.message).toMatch(/^line 8: time_min must be a number > 0/);
    expect(r.errors[4]?.message).toMatch(/^line 9: depth_um must be a number ≥ 0, got "abc"/);
    // The throwing form stops at the first bad line.
    expect(() => parseCalibrationCsv(text)).toThrow(/^line 4: kind/);
  });
  it('names a missing column on line 1, and a file without rows', () => {
    expect(parseCalibrationCsvReport('width_um,kind,density,depth_um\n2,trench,0.3,25\n').errors).toEqual([{ line: 1, message: 'line 1: missing column(s) time_min (need width_um,kind,density,time_min,depth_um)' }]);
    expect(parseCalibrationCsvReport('').errors[0]?.message).toMatch(/no data rows/);
  });
  it('names the line of broken quoting / a short row', () => {
    const r = parseCalibrationCsvReport(`${HEADER}\n2,trench,0.3,10,25\n3,"trench,0.3,10,25\n`);
    expect(r.rows).toEqual([]);
    expect(r.errors[0]?.line).toBe(3);
  });
  it('a row with too few or too many values is its own error; the rows around it are still read and checked', () => {
    // a short row used to end the whole file with the parser's own words and hide the other lines' errors
    const r = parseCalibrationCsvReport(`${HEADER}\n1,trench,0.1,10,20\n2,trench,zz,10,22\n3,trench,0.1,10\n2,5,trench,0.1,10,30\n5,hole,0.2,10,24\n`);
    expect(r.rows.map((x) => x.line)).toEqual([2, 6]);
    expect(r.errors.map((e) => e.line)).toEqual([3, 4, 5]);
    expect(r.errors[1]?.message).toBe('line 4: 4 values, the header has 5 columns (width_um,kind,density,time_min,depth_um); a decimal comma splits a number in two');
    expect(r.errors[2]?.message).toMatch(/^line 5: 6 values, the header has 5 columns/);
  });
  it('caps the list at 100 errors and says so', () => {
    const lines = [HEADER, ...Array.from({ length: 150 }, () => '2,slot,0.3,10,25')];
    const r = parseCalibrationCsvReport(lines.join('\n'));
    expect(r.errors).toHaveLength(100);
    expect(r.errorsTruncated).toBe(true);
  });
});

describe('underdetermined fits get a clear message', () => {
  const base = testModel();
  const rows = (spec: [number, number][]) => spec.map(([w, d], i) => ({ line: i + 2, widthUm: w, kind: 'trench' as const, density: 0.3, timeMin: 10, depthUm: d }));
  it('one width cannot separate open rate from reaction probability', () => {
    const r = fitCalibration(rows([[2, 10], [2, 11], [2, 12]]), { baseModel: base });
    expect(r).toEqual({ ok: false, message: 'cannot calibrate: need at least two distinct widths to separate open rate from reaction probability' });
  });
  it('fewer rows than parameters + 1', () => {
    const r = fitCalibration(rows([[2, 10], [4, 14]]), { baseModel: base });
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.message).toBe('cannot calibrate: need more measurements than fitted parameters (2 rows for 2 parameters; at least 3 rows)');
  });
  it('the loading coefficient needs a spread of densities', () => {
    const r = fitCalibration(rows([[2, 10], [4, 14], [8, 17], [16, 19]]), { baseModel: base, fit: ['openRateUmPerMin', 'loadingCoefficient'] });
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.message).toMatch(/different local densities/);
  });
  it('a fit on a handful of points says how few and how wide a 95 % interval really is', () => {
    // Student t with 1 and 2 degrees of freedom has closed-form quantiles (Cauchy: tan(π(p − ½)); ν = 2:
    // (2p − 1)·√(2 / (4p(1 − p)))), which check the table the warning quotes.
    const p = 0.975;
    expect(Math.tan(Math.PI * (p - 0.5)).toFixed(2)).toBe('12.71');
    const t2 = ((2 * p - 1) * Math.sqrt(2 / (4 * p * (1 - p)))).toFixed(3);
    const few = fitCalibration(rows([[2, 10], [4, 14], [8, 17], [16, 19]]), { baseModel: base });
    expect(few.ok).toBe(true);
    if (few.ok) expect(few.warnings.join(' ')).toContain(`only 4 measurements for 2 fitted parameters (2 degrees of freedom): the standard errors rest on very few points, and a 95 % interval is ${t2}× the standard error`);
    const many = fitCalibration(rows([2, 3, 4, 5, 6, 8, 10, 12, 16, 20, 30, 40].map((w) => [w, 20 - 20 / w])), { baseModel: base });
    expect(many.ok).toBe(true);
    if (many.ok) expect(many.warnings.filter((w) => /degrees? of freedom/.test(w))).toEqual([]);
  });
  it('nothing chosen to fit', () => {
    const r = fitCalibration(rows([[2, 10], [4, 14]]), { baseModel: base, fit: [] });
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.message).toBe('cannot calibrate: nothing to fit: choose at least one parameter');
  });
});

describe('the fit records its covariance in the model', () => {
  it('demo CSV: covariance diagonal = squared standard errors, symmetric, and the model validates', () => {
    const rows = parseCalibrationCsv(readFileSync(new URL('../../samples/calibration/demo-trench-lag.csv', import.meta.url), 'utf8'));
    const base = parseProcessModel(JSON.parse(readFileSync(new URL('../../samples/models/deep-trench-continuous.json', import.meta.url), 'utf8')));
    if (!base.ok) throw new Error('sample model invalid');
    const fit = fitCalibration(rows, { baseModel: base.model, fit: ['openRateUmPerMin', 'reactionProbability'], date: '2026-12-02' });
    if (!fit.ok) throw new Error(fit.message);
    const cov = fit.model.calibration?.covariance;
    expect(cov?.parameters).toEqual(['openRateUmPerMin', 'reactionProbability']);
    expect(cov?.matrix[0]?.[0]).toBeCloseTo((fit.parameters.openRateUmPerMin?.standardError ?? 0) ** 2, 12);
    expect(cov?.matrix[1]?.[1]).toBeCloseTo((fit.parameters.reactionProbability?.standardError ?? 0) ** 2, 12);
    expect(cov?.matrix[0]?.[1]).toBeCloseTo(cov?.matrix[1]?.[0] ?? NaN, 15);
    expect(fit.model.calibration?.residualStandardErrorUm).toBeCloseTo(fit.residualStandardErrorUm, 12);
    expect(parseProcessModel(JSON.parse(JSON.stringify(fit.model))).ok).toBe(true);
  });
});
