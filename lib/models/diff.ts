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

function leaves(value: unknown, prefix: string, out: Map<string, Leaf>): void {
  if (SKIPPED.has(prefix)) return;
  if (Array.isArray(value)) {
    out.set(prefix, value.every((v) => typeof v !== 'object' || v === null) ? value.map(String).join(' – ') : JSON.stringify(value));
    return;
  }
  if (value !== null && typeof value === 'object') {
    for (const [k, v] of Object.entries(value)) leaves(v, prefix ? `${prefix}.${k}` : k, out);
    return;
  }
  if (value === undefined) return;
  out.set(prefix, value as Leaf);
}

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
    const field = fieldOf(path);
    out.push({ path, label: field?.label ?? path, unit: field?.unit ?? '', before: x, after: y, change: !a.has(path) ? 'added' : !b.has(path) ? 'removed' : 'changed' });
  }
  return out.sort((p, q) => (ORDER.get(p.path) ?? 1e6) - (ORDER.get(q.path) ?? 1e6) || (p.path < q.path ? -1 : p.path > q.path ? 1 : 0));
}
