/**
 * Grouping of an analysis's findings so a layout with thousands of near-identical openings reads as a handful of
 * rows. Two findings share a group when they have the same kind and the same cause, and either
 *   - both concern openings of the same width class (widths within `widthTolerance` of the class's narrowest
 *     width; the location does not matter — 12,000 vias of one size are one problem), or
 *   - neither has an opening width (density windows, gradients) and their regions lie within `nearUm` of each
 *     other, directly or through a chain of such neighbours.
 * Pure: no database, no I/O. Groups keep the input order (worst first) of their members.
 */

export type GroupableFinding = {
  key: string;
  kind: string;
  /** What crossed which limit, e.g. "limit 2.5 µm", "window 100/50 µm", "width" (calibration excursions). */
  cause: string;
  severity: string;
  bboxUm: readonly [number, number, number, number];
  /** Width of the opening the finding is about, µm; null when it is not about one opening. */
  widthUm: number | null;
};

export type FindingGroup = {
  /** Stable for the same findings: kind, cause and the class's narrowest width or first member's key. */
  id: string;
  kind: string;
  cause: string;
  /** Worst severity among members (error > warning > info). */
  severity: string;
  count: number;
  /** Member keys, in input order. */
  memberKeys: string[];
  /** Narrowest and widest member width, µm; null for location-based groups. */
  widthRangeUm: [number, number] | null;
  /** Union of the members' regions, µm. */
  bboxUm: [number, number, number, number];
};

export type GroupOptions = {
  /** Relative width tolerance of one class (0.02 = widths up to 2 % above the class's narrowest). */
  widthTolerance?: number;
  /** Largest gap between two regions that still counts as nearby, µm. */
  nearUm?: number;
};

const SEVERITY_ORDER: Record<string, number> = { error: 0, warning: 1, info: 2 };
const worse = (a: string, b: string) => ((SEVERITY_ORDER[a] ?? 9) <= (SEVERITY_ORDER[b] ?? 9) ? a : b);

/** Classes of sorted widths: a new class starts where a width exceeds the class's first width by the tolerance. */
export function widthClasses(widths: readonly number[], tolerance: number): number[][] {
  const sorted = [...new Set(widths)].sort((a, b) => a - b);
  const classes: number[][] = [];
  let current: number[] = [];
  for (const w of sorted) {
    const first = current[0];
    if (first !== undefined && w > first * (1 + tolerance) + 1e-12) {
      classes.push(current);
      current = [];
    }
    current.push(w);
  }
  if (current.length) classes.push(current);
  return classes;
}

/** Union-find over indices, for the location-based groups. */
function clusterByDistance(boxes: readonly (readonly [number, number, number, number])[], nearUm: number): number[] {
  const parent = boxes.map((_, i) => i);
  const find = (i: number): number => {
    let r = i;
    while (parent[r] !== r) r = parent[r] as number;
    while (parent[i] !== r) {
      const next = parent[i] as number;
      parent[i] = r;
      i = next;
    }
    return r;
  };
  // sweep along x: only boxes whose x-ranges come within nearUm can be neighbours
  const x0 = (i: number) => (boxes[i] as readonly number[])[0] as number;
  const order = boxes.map((_, i) => i).sort((a, b) => x0(a) - x0(b));
  const active: number[] = [];
  for (const i of order) {
    const b = boxes[i] as readonly number[];
    for (let k = active.length - 1; k >= 0; k--) {
      const j = active[k] as number;
      const a = boxes[j] as readonly number[];
      if ((a[2] as number) + nearUm < (b[0] as number)) {
        active.splice(k, 1);
        continue;
      }
      const gapY = Math.max((a[1] as number) - (b[3] as number), (b[1] as number) - (a[3] as number), 0);
      if (gapY <= nearUm) parent[find(i)] = find(j);
    }
    active.push(i);
  }
  return boxes.map((_, i) => find(i));
}

/**
 * Groups findings (see the module comment). Groups come out in the order of their first member, so a
 * worst-first input gives worst-first groups.
 * @example groupFindings([a5um, b5um, c10um]) // two groups: [a, b] (5 µm class) and [c]
 */
export function groupFindings(findings: readonly GroupableFinding[], options: GroupOptions = {}): FindingGroup[] {
  const tolerance = options.widthTolerance ?? 0.02;
  const nearUm = options.nearUm ?? 0;
  const byCause = new Map<string, number[]>();
  findings.forEach((f, i) => {
    const k = `${f.kind}\u0000${f.cause}\u0000${f.widthUm === null ? 'loc' : 'w'}`;
    const list = byCause.get(k);
    if (list) list.push(i);
    else byCause.set(k, [i]);
  });

  const groupOf = new Map<string, number[]>(); // group id -> member indices
  for (const [k, members] of byCause) {
    const first = findings[members[0] as number] as GroupableFinding;
    const head = `${first.kind}|${first.cause}`;
    if (k.endsWith('\u0000w')) {
      const classes = widthClasses(
        members.map((i) => (findings[i] as GroupableFinding).widthUm as number),
        tolerance,
      );
      const classStart = new Map<number, number>();
      for (const c of classes) for (const w of c) classStart.set(w, c[0] as number);
      for (const i of members) {
        const id = `${head}|w${(classStart.get((findings[i] as GroupableFinding).widthUm as number) as number).toFixed(4)}`;
        const list = groupOf.get(id);
        if (list) list.push(i);
        else groupOf.set(id, [i]);
      }
    } else {
      const roots = clusterByDistance(
        members.map((i) => (findings[i] as GroupableFinding).bboxUm),
        nearUm,
      );
      const byRoot = new Map<number, number[]>();
      members.forEach((i, m) => {
        const r = roots[m] as number;
        const list = byRoot.get(r);
        if (list) list.push(i);
        else byRoot.set(r, [i]);
      });
      for (const list of byRoot.values()) {
        list.sort((a, b) => a - b);
        groupOf.set(`${head}|n${(findings[list[0] as number] as GroupableFinding).key}`, list);
      }
    }
  }

  const groups: (FindingGroup & { firstIndex: number })[] = [];
  for (const [id, idx] of groupOf) {
    idx.sort((a, b) => a - b);
    const members = idx.map((i) => findings[i] as GroupableFinding);
    const first = members[0] as GroupableFinding;
    let severity = first.severity;
    const bbox: [number, number, number, number] = [Infinity, Infinity, -Infinity, -Infinity];
    let wMin = Infinity;
    let wMax = -Infinity;
    for (const m of members) {
      severity = worse(severity, m.severity);
      bbox[0] = Math.min(bbox[0], m.bboxUm[0]);
      bbox[1] = Math.min(bbox[1], m.bboxUm[1]);
      bbox[2] = Math.max(bbox[2], m.bboxUm[2]);
      bbox[3] = Math.max(bbox[3], m.bboxUm[3]);
      if (m.widthUm !== null) {
        wMin = Math.min(wMin, m.widthUm);
        wMax = Math.max(wMax, m.widthUm);
      }
    }
    groups.push({
      id,
      kind: first.kind,
      cause: first.cause,
      severity,
      count: members.length,
      memberKeys: members.map((m) => m.key),
      widthRangeUm: Number.isFinite(wMin) ? [wMin, wMax] : null,
      bboxUm: bbox,
      firstIndex: idx[0] as number,
    });
  }
  groups.sort((a, b) => a.firstIndex - b.firstIndex);
  return groups.map(({ firstIndex: _f, ...g }) => g);
}
