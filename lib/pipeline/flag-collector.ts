/**
 * Collecting flags: counts cover every flag; the list keeps the worst `cap`, ranked by severity, then by how far
 * beyond its limit each value is (relative to the limit), then by id.
 */
import type { Flag, FlagSink } from './flags';
import { FLAG_KINDS, type FlagKind, type Severity } from './settings';


const SEVERITY_RANK: Record<Severity, number> = { error: 0, warning: 1, info: 2 };

/** How far beyond its limit a value is, relative to the limit (bigger = worse); used to rank within a severity. */
export function exceedanceOf(measured: number, limit: number): number {
  const scale = Math.abs(limit) > 1e-12 ? Math.abs(limit) : 1;
  return Math.abs(measured - limit) / scale;
}

export function exceedance(f: Flag): number {
  return exceedanceOf(f.measured, f.limit);
}

type RankKey = { severity: Severity; ex: number; id: string };

function compareKeys(a: RankKey, b: RankKey): number {
  return SEVERITY_RANK[a.severity] - SEVERITY_RANK[b.severity] || b.ex - a.ex || (a.id < b.id ? -1 : a.id > b.id ? 1 : 0);
}

export function compareFlags(a: Flag, b: Flag): number {
  return compareKeys({ severity: a.severity, ex: exceedance(a), id: a.id }, { severity: b.severity, ex: exceedance(b), id: b.id });
}

export type FlagCounts = Record<FlagKind, Record<Severity, number>>;

export function emptyFlagCounts(): FlagCounts {
  const counts = {} as FlagCounts;
  for (const k of FLAG_KINDS) counts[k] = { error: 0, warning: 0, info: 0 };
  return counts;
}

/**
 * Keeps counts of every flag and the `cap` worst flags (bounded memory for layouts with millions of openings).
 * Once `cap` flags are kept, a flag ranking below the current cut is counted but never built.
 */
export class FlagCollector implements FlagSink {
  readonly counts: FlagCounts = emptyFlagCounts();
  total = 0;
  /** A kept flag, or (flag null) the reference `ref` to build it from at list() time (offerDeferred). */
  private kept: (RankKey & { flag: Flag | null; ref: number })[] = [];
  /** Rank of the worst kept flag after the last trim (null until `cap` flags were kept). */
  private cut: RankKey | null = null;
  constructor(private readonly cap: number) {}

  offer(id: string, kind: FlagKind, severity: Severity, measured: number, limit: number, build: () => Flag): void {
    if (this.rank(id, kind, severity, measured, limit)) this.keep(severity, exceedanceOf(measured, limit), id, build(), -1);
  }

  /**
   * Like offer, but a kept flag is only remembered as `ref` (e.g. a row of a result table) and built by the
   * `resolve` given to list(): of the many flags that rank above the cut for a while on a big layout, only the
   * final `cap` get messages built. Returns whether the flag was kept (for now).
   */
  offerDeferred(id: string, kind: FlagKind, severity: Severity, measured: number, limit: number, ref: number): boolean {
    if (!this.rank(id, kind, severity, measured, limit)) return false;
    this.keep(severity, exceedanceOf(measured, limit), id, null, ref);
    return true;
  }

  /**
   * The refs of the deferred flags still kept (after a trim): a caller that keeps what `resolve` needs per ref
   * (a streamed analysis, whose rows are gone once offered) can drop the rest.
   */
  keptRefs(): Set<number> {
    this.trim();
    const out = new Set<number>();
    for (const k of this.kept) if (!k.flag) out.add(k.ref);
    return out;
  }

  private keep(severity: Severity, ex: number, id: string, flag: Flag | null, ref: number): void {
    this.kept.push({ severity, ex, id, flag, ref });
    if (this.kept.length >= 2 * this.cap) this.trim();
  }

  /** Counts the flag; true when it ranks above the current cut (so it must be kept). */
  private rank(id: string, kind: FlagKind, severity: Severity, measured: number, limit: number): boolean {
    this.counts[kind][severity]++;
    this.total++;
    const ex = exceedanceOf(measured, limit);
    // Most offers on a big layout rank below the cut: decide that before allocating anything.
    const cut = this.cut;
    if (cut) {
      const bySeverity = SEVERITY_RANK[severity] - SEVERITY_RANK[cut.severity];
      if (bySeverity > 0) return false;
      if (bySeverity === 0) {
        const d = cut.ex - ex; // as compareKeys: NaN falls through to the id, like 0
        if (d > 0) return false;
        if (!(d < 0) && id >= cut.id) return false;
      }
    }
    return true;
  }

  add(flags: Iterable<Flag>): void {
    for (const f of flags) this.offer(f.id, f.kind, f.severity, f.measured, f.limit, () => f);
  }

  private trim(): void {
    this.kept.sort(compareKeys);
    if (this.kept.length >= this.cap) {
      this.kept.length = this.cap;
      const last = this.kept[this.cap - 1] as RankKey;
      this.cut = { severity: last.severity, ex: last.ex, id: last.id };
    }
  }

  /**
   * The kept flags, worst first (errors, then warnings, then info; within each, furthest beyond its limit first).
   * Deferred flags are built with `resolve(ref, id)`.
   */
  list(resolve?: (ref: number, id: string) => Flag): Flag[] {
    this.trim();
    return this.kept.map((k) => {
      if (k.flag) return k.flag;
      if (!resolve) throw new Error(`flag ${k.id} was deferred: list() needs a resolver`);
      return (k.flag = resolve(k.ref, k.id));
    });
  }
}
