/**
 * CSV export of findings: one row per finding with its review state, RFC 4180 quoting (csv-stringify), lengths
 * in µm and densities in the unit stored with each row (% since flags report percent). A header comment would break spreadsheet imports, so provenance
 * (analysis, model, export time) goes in the columns of every row instead.
 */
import { stringify } from 'csv-stringify/sync';
import type { FindingItem } from './findings-query';
import { STATUS_LABEL } from './statuses';

export const CSV_COLUMNS = [
  'analysis_id', 'model', 'flag_key', 'severity', 'kind', 'cause', 'layer', 'x_um', 'y_um', 'x0_um', 'y0_um', 'x1_um', 'y1_um',
  'measured', 'limit', 'unit', 'width_um', 'status', 'assignee', 'waiver_reason', 'waiver_approver', 'waived_at', 'waiver_note', 'message',
] as const;

/**
 * Text that a spreadsheet would run as a formula (=, +, -, @, or a leading tab or CR; OWASP "CSV injection") gets a
 * leading apostrophe, so a waiver reason typed as "=HYPERLINK(…)" stays text. Numbers are written as numbers.
 */
export function guardFormula(value: string): string {
  return /^[=+\-@\t\r]/.test(value) ? `'${value}` : value;
}

export function findingsCsv(items: readonly FindingItem[], meta: { analysisId: string; model: string }): string {
  const rows = items.map((f) => [
    meta.analysisId, meta.model, f.key, f.severity, f.kind, f.cause, f.layer, f.atUm[0], f.atUm[1], ...f.bboxUm,
    f.measured, f.limit, f.unit, f.widthUm ?? '', STATUS_LABEL[f.status], f.assignee?.name ?? '',
    f.waiver?.reason ?? '', f.waiver?.approverName ?? '', f.waiver?.at ?? '', f.waiver?.carriedNote ?? '', f.message,
  ]);
  return stringify(rows, { header: true, columns: [...CSV_COLUMNS], cast: { number: (v) => String(v), string: guardFormula } });
}
