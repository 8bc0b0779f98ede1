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

export type CalibrationCsvIssue = { line: number | null; message: string };
export type CalibrationCsvReport = { rows: CalibrationRow[]; errors: CalibrationCsvIssue[]; errorsTruncated: boolean };

/** At most this many row errors are listed (a wrong file would otherwise give one per line). */
const MAX_LISTED_ERRORS = 100;

function rowOf(r: Record<string, string>, line: number): CalibrationRow {
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
}

/**
 * Parse calibration CSV text, collecting every bad row (each message names its line) instead of stopping at the
 * first; good rows are returned too, so a form can show both. File-level problems (no header, a missing column,
 * broken quoting) give one error and no rows.
 * @example parseCalibrationCsvReport('width_um,kind,density,time_min,depth_um\n2,slot,0.3,10,25\n').errors
 *   // [{ line: 2, message: 'line 2: kind must be trench or hole, got "slot"' }]
 */
export function parseCalibrationCsvReport(text: string): CalibrationCsvReport {
  // Rows are read as arrays (relax_column_count) and matched to the header here, so a row with too few or too many
  // values is one line's error, not the end of the file: "2,5" typed with a decimal comma shifts every value after it.
  let records: { record: string[]; info: { lines: number } }[];
  try {
    records = parse(text, { comment: '#', skip_empty_lines: true, trim: true, info: true, bom: true, relax_column_count: true }) as unknown as typeof records;
  } catch (err) {
    const e = err as { message?: string; lines?: number };
    const msg = (e.message ?? String(err)).replace(/\s+/g, ' ').replace(/\s*(at|on) line \d+\.?$/, '');
    return { rows: [], errors: [{ line: e.lines ?? null, message: e.lines ? `line ${e.lines}: ${msg}` : msg }], errorsTruncated: false };
  }
  const [head, ...body] = records;
  if (!head || body.length === 0) return { rows: [], errors: [{ line: null, message: `no data rows: expected a header ${REQUIRED.join(',')} and at least one row` }], errorsTruncated: false };
  const columns = head.record.map((c) => c.trim().toLowerCase());
  const missing = REQUIRED.filter((c) => !columns.includes(c));
  if (missing.length) return { rows: [], errors: [{ line: head.info.lines, message: `line ${head.info.lines}: missing column(s) ${missing.join(', ')} (need ${REQUIRED.join(',')})` }], errorsTruncated: false };
  const rows: CalibrationRow[] = [];
  const errors: CalibrationCsvIssue[] = [];
  let errorCount = 0;
  for (const { record, info } of body) {
    try {
      if (record.length !== columns.length) {
        throw new CalibrationCsvError(`line ${info.lines}: ${record.length} ${record.length === 1 ? 'value' : 'values'}, the header has ${columns.length} columns (${columns.join(',')}); a decimal comma splits a number in two`, info.lines);
      }
      rows.push(rowOf(Object.fromEntries(columns.map((c, i) => [c, record[i] ?? ''])), info.lines));
    } catch (err) {
      if (!(err instanceof CalibrationCsvError)) throw err;
      if (++errorCount <= MAX_LISTED_ERRORS) errors.push({ line: err.line ?? info.lines, message: err.message });
    }
  }
  return { rows, errors, errorsTruncated: errorCount > MAX_LISTED_ERRORS };
}

/**
 * Parse calibration CSV text; throws CalibrationCsvError naming the line of the first problem.
 * @example parseCalibrationCsv('width_um,kind,density,time_min,depth_um\n2,trench,0.3,10,25\n') // [{ line: 2, widthUm: 2, … }]
 */
export function parseCalibrationCsv(text: string): CalibrationRow[] {
  const report = parseCalibrationCsvReport(text);
  const first = report.errors[0];
  if (first) throw new CalibrationCsvError(first.message, first.line ?? undefined);
  return report.rows;
}

/** Write rows back as CSV (same columns), e.g. for generated demo data. */
export function calibrationRowsToCsv(rows: Omit<CalibrationRow, 'line'>[], header: string[] = []): string {
  const lines = [...header.map((h) => `# ${h}`), REQUIRED.join(',')];
  for (const r of rows) lines.push([r.widthUm, r.kind, r.density, r.timeMin, r.depthUm].join(','));
  return lines.join('\n') + '\n';
}
