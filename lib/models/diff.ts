/**
 * Parameter diff between two model documents: every leaf that differs, labelled from MODEL_PARAMETERS where it is
 * a known parameter. The calibration record is compared by its summary (date, source, ranges, R², point count),
 * not by its covariance, residual statistics or per-parameter copies of the fitted values.
 */
import { fieldOf, MODEL_PARAMETERS } from './parameters';

export type ParameterChange = {
  path: string;
  label: string;
  unit: string;
  before: string | number | boolean | null;
  after: string | number | boolean | null;
  change: 'added' | 'removed' | 'changed';
};

type Leaf = string | number | boolean | null;

// Calibration internals that change with every fit; the fitted values themselves are compared as parameters.
const SKIPPED = new Set(['calibration.covariance', 'calibration.parameters', 'calibration.rmsResidualUm', 'calibration.residualStandardErrorUm']);

// Ranges are joined into one text; their ends are rounded as the page rounds single numbers (a fitted range end like
// 0.07548250000000001 is float noise, not precision).
const leafText = (v: unknown) => (typeof v === 'number' ? String(Number(v.toPrecision(6))) : String(v));

function leaves(value: unknown, prefix: string, out: Map<string, Leaf>): void {
  if (SKIPPED.has(prefix)) return;
  if (Array.isArray(value)) {
    out.set(prefix, value.every((v) => typeof v !== 'object' || v === null) ? value.map(leafText).join(' – ') : JSON.stringify(value));
    return;
  }
  if (value !== null && typeof value === 'object') {
    for (const [k, v] of Object.entries(value)) leaves(v, prefix ? `${prefix}.${k}` : k, out);
    return;
  }
  if (value === undefined) return;
  out.set(prefix, value as Leaf);
}

// The calibration record's summary fields, in words (they are not model parameters, so MODEL_PARAMETERS lacks them).
const CALIBRATION_FIELDS: Record<string, { label: string; unit: string }> = {
  'calibration.date': { label: 'Calibration date', unit: '' },
  'calibration.source': { label: 'Calibration data', unit: '' },
  'calibration.pointCount': { label: 'Calibration points', unit: '' },
  'calibration.rSquared': { label: 'Calibration R²', unit: '' },
  'calibration.widthUm': { label: 'Calibrated widths', unit: 'µm' },
  'calibration.aspectRatio': { label: 'Calibrated aspect ratios', unit: '' },
  'calibration.density': { label: 'Calibrated densities', unit: 'fraction' },
  'calibration.kinds': { label: 'Calibrated kinds', unit: '' },
};

const ORDER = new Map(MODEL_PARAMETERS.map((f, i) => [f.path, i]));

/** Leaves that differ between `before` and `after`, known parameters first in form order, the rest by path. */
export function diffModelDocuments(before: unknown, after: unknown): ParameterChange[] {
  const a = new Map<string, Leaf>();
  const b = new Map<string, Leaf>();
  leaves(before, '', a);
  leaves(after, '', b);
  const paths = [...new Set([...a.keys(), ...b.keys()])].filter((p) => p !== 'version' && p !== 'schemaVersion');
  const out: ParameterChange[] = [];
  for (const path of paths) {
    const x = a.has(path) ? (a.get(path) as Leaf) : null;
    const y = b.has(path) ? (b.get(path) as Leaf) : null;
    if (a.has(path) && b.has(path) && x === y) continue;
    const field = fieldOf(path) ?? CALIBRATION_FIELDS[path];
    out.push({ path, label: field?.label ?? path, unit: field?.unit ?? '', before: x, after: y, change: !a.has(path) ? 'added' : !b.has(path) ? 'removed' : 'changed' });
  }
  return out.sort((p, q) => (ORDER.get(p.path) ?? 1e6) - (ORDER.get(q.path) ?? 1e6) || (p.path < q.path ? -1 : p.path > q.path ? 1 : 0));
}
