/**
 * Revision compare: which findings of a later analysis are new, which of the earlier one are resolved, and which
 * persist. Two findings match when they have the same kind (and, for calibration excursions, the same quantity)
 * and their points lie within `toleranceUm` of each other (Euclidean). Matching is one-to-one, closest pairs
 * first, so a cluster of equal findings matches up pairwise instead of all to one. Pure.
 */

export type ComparableFinding = { key: string; kind: string; xUm: number; yUm: number };

export type CompareResult = {
  /** Pairs found in both: earlier key → later key, with their distance, µm. */
  unchanged: { beforeKey: string; afterKey: string; distanceUm: number }[];
  /** Keys of the later analysis with no match in the earlier one. */
  added: string[];
  /** Keys of the earlier analysis with no match in the later one. */
  resolved: string[];
};

/** What must agree for two findings to be "the same": the kind, plus the quantity of a calibration excursion. */
export function matchClass(f: { key: string; kind: string }): string {
  if (f.kind === 'outside-calibrated-range') return `${f.kind}:${f.key.split(':').at(-1) ?? ''}`;
  return f.kind;
}

export function compareFindings(before: readonly ComparableFinding[], after: readonly ComparableFinding[], toleranceUm: number): CompareResult {
  if (!(toleranceUm >= 0) || !Number.isFinite(toleranceUm)) throw new RangeError(`toleranceUm must be a finite number ≥ 0, got ${toleranceUm}`);
  const cell = Math.max(toleranceUm, 1e-9);
  // one spatial hash per match class; cell (ix, iy) packed into one number (|ix|, |iy| < 2^26 cells is plenty)
  const OFFSET = 2 ** 26;
  const pack = (ix: number, iy: number) => (ix + OFFSET) * 2 ** 27 + (iy + OFFSET);
  const classes = new Map<string, Map<number, number[]>>();
  before.forEach((f, i) => {
    const cls = matchClass(f);
    let grid = classes.get(cls);
    if (!grid) classes.set(cls, (grid = new Map()));
    const k = pack(Math.floor(f.xUm / cell), Math.floor(f.yUm / cell));
    const list = grid.get(k);
    if (list) list.push(i);
    else grid.set(k, [i]);
  });

  const candidates: { b: number; a: number; d: number }[] = [];
  after.forEach((f, a) => {
    const grid = classes.get(matchClass(f));
    if (!grid) return;
    const ix = Math.floor(f.xUm / cell);
    const iy = Math.floor(f.yUm / cell);
    for (let dx = -1; dx <= 1; dx++) {
      for (let dy = -1; dy <= 1; dy++) {
        const list = grid.get(pack(ix + dx, iy + dy));
        if (!list) continue;
        for (const b of list) {
          const g = before[b] as ComparableFinding;
          const d = Math.hypot(g.xUm - f.xUm, g.yUm - f.yUm);
          if (d <= toleranceUm) candidates.push({ b, a, d });
        }
      }
    }
  });
  candidates.sort((p, q) => p.d - q.d || p.b - q.b || p.a - q.a);

  const usedBefore = new Uint8Array(before.length);
  const usedAfter = new Uint8Array(after.length);
  const unchanged: CompareResult['unchanged'] = [];
  for (const c of candidates) {
    if (usedBefore[c.b] || usedAfter[c.a]) continue;
    usedBefore[c.b] = 1;
    usedAfter[c.a] = 1;
    unchanged.push({ beforeKey: (before[c.b] as ComparableFinding).key, afterKey: (after[c.a] as ComparableFinding).key, distanceUm: c.d });
  }
  return {
    unchanged,
    added: after.filter((_, i) => !usedAfter[i]).map((f) => f.key),
    resolved: before.filter((_, i) => !usedBefore[i]).map((f) => f.key),
  };
}
