/**
 * Calibration measurements as CSV: one measured feature per row.
 *   width_um,kind,density,time_min,depth_um
 *   2.0,trench,0.35,12,41.8
 * - header row required; column order free; extra columns (e.g. structure, wafer, note) are kept out of the fit;
 * - kind = trench | hole; density = effective open density around the structure, 0–1; time_min > 0; depth_um ≥ 0
 *   (depth in the etched material, measured at the feature centre, e.g. by SEM cross-section);
 * - lines starting with # are comments; blank lines are skipped.
 * Errors throw CalibrationCsvError with a one-line message naming the line.
 */
import { parse } from 'csv-parse/sync';

export type CalibrationRow = {
  /** 1-based line number in the CSV, for messages. */
  line: number;
  widthUm: number;
  kind: 'trench' | 'hole';
  density: number;
  timeMin: number;
  depthUm: number;
};

export class CalibrationCsvError extends Error {
  constructor(
    message: string,
    readonly line?: number,
  ) {
    super(message);
    this.name = 'CalibrationCsvError';
  }
}

const REQUIRED = ['width_um', 'kind', 'density', 'time_min', 'depth_um'] as const;

function numberField(raw: string | undefined, name: string, line: number, check: (v: number) => boolean, rule: string): number {
  const v = raw === undefined || raw === '' ? NaN : Number(raw);
  if (!Number.isFinite(v) || !check(v)) throw new CalibrationCsvError(`line ${line}: ${name} must be ${rule}, got "${raw ?? ''}"`, line);
  return v;
}

/**
 * Parse calibration CSV text.
 * @example parseCalibrationCsv('width_um,kind,density,time_min,depth_um\n2,trench,0.3,10,25\n') // [{ line: 2, widthUm: 2, … }]
 */
export function parseCalibrationCsv(text: string): CalibrationRow[] {
  let records: { record: Record<string, string>; info: { lines: number } }[];
  try {
    records = parse(text, { columns: (h: string[]) => h.map((c) => c.trim().toLowerCase()), comment: '#', skip_empty_lines: true, trim: true, info: true, bom: true });
  } catch (err) {
    const e = err as { message?: string; lines?: number };
    const msg = (e.message ?? String(err)).replace(/\s+/g, ' ');
    throw new CalibrationCsvError(e.lines ? `line ${e.lines}: ${msg}` : msg, e.lines);
  }
  const first = records[0];
  if (!first) throw new CalibrationCsvError(`no data rows: expected a header ${REQUIRED.join(',')} and at least one row`);
  const missing = REQUIRED.filter((c) => !(c in first.record));
  if (missing.length) throw new CalibrationCsvError(`line 1: missing column(s) ${missing.join(', ')} (need ${REQUIRED.join(',')})`, 1);
  return records.map(({ record: r, info }) => {
    const line = info.lines;
    const kind = (r.kind ?? '').toLowerCase();
    if (kind !== 'trench' && kind !== 'hole') throw new CalibrationCsvError(`line ${line}: kind must be trench or hole, got "${r.kind ?? ''}"`, line);
    return {
      line,
      widthUm: numberField(r.width_um, 'width_um', line, (v) => v > 0, 'a number > 0'),
      kind,
      density: numberField(r.density, 'density', line, (v) => v >= 0 && v <= 1, 'a number in [0, 1]'),
      timeMin: numberField(r.time_min, 'time_min', line, (v) => v > 0, 'a number > 0'),
      depthUm: numberField(r.depth_um, 'depth_um', line, (v) => v >= 0, 'a number ≥ 0'),
    };
  });
}

/** Write rows back as CSV (same columns), e.g. for generated demo data. */
export function calibrationRowsToCsv(rows: Omit<CalibrationRow, 'line'>[], header: string[] = []): string {
  const lines = [...header.map((h) => `# ${h}`), REQUIRED.join(',')];
  for (const r of rows) lines.push([r.widthUm, r.kind, r.density, r.timeMin, r.depthUm].join(','));
  return lines.join('\n') + '\n';
}
