/**
 * The findings list as the table asks for it: filter (kind, severity, status, layer, assignee, text), sort and page
 * on the server, either one row per finding or one row per group (lib/review/group-findings.ts). Pure: works on
 * findings already loaded with their review state.
 */
import { z } from 'zod';
import { FINDING_STATUSES, type FindingStatus } from './statuses';
import { groupFindings, type FindingGroup, type GroupableFinding } from './group-findings';

export type FindingItem = {
  /** analysis_flags.id */
  id: string;
  /** The pipeline's stable flag id (analysis_flags.flag_key). */
  key: string;
  rank: number;
  kind: string;
  severity: string;
  cause: string;
  /** Etch layer(s) the finding is on, e.g. "1/0" (all findings of an analysis are on its merged etch layers). */
  layer: string;
  bboxUm: [number, number, number, number];
  atUm: [number, number];
  measured: number;
  limit: number;
  unit: string;
  message: string;
  featureId: number | null;
  widthUm: number | null;
  /** The limit lies inside the prediction's uncertainty band (calibrated models); null = not assessed. */
  uncertain: boolean | null;
  status: FindingStatus;
  assignee: { id: string; name: string } | null;
  waiver: { reason: string; approverName: string; at: string; carriedNote: string | null } | null;
  events: number;
};

export type GroupRow = Omit<FindingGroup, 'memberKeys'> & {
  /** Members that pass the current filters (= count when unfiltered). */
  matching: number;
  status: FindingStatus | 'mixed';
  statusCounts: Partial<Record<FindingStatus, number>>;
  assignees: string[];
  /** The worst member, shown as the group's example. */
  first: FindingItem;
};

export const FINDING_SORTS = ['rank', 'kind', 'status', 'measured', 'count', 'assignee'] as const;

export const findingsQuery = z.object({
  view: z.enum(['groups', 'flat']).default('groups'),
  /** Only the members of this group (flat view). */
  group: z.string().max(300).optional(),
  kind: z.string().max(60).optional(),
  severity: z.enum(['error', 'warning', 'info']).optional(),
  status: z.enum(FINDING_STATUSES).optional(),
  layer: z.string().max(40).optional(),
  /** A user id, or "none" for unassigned findings. */
  assignee: z.string().max(64).optional(),
  q: z.string().max(200).optional(),
  /** Exactly this finding key (flat view). */
  key: z.string().max(200).optional(),
  /** Return the page holding this finding key (or its group) instead of `offset`; see FindingsPage.located. */
  locate: z.string().max(200).optional(),
  sort: z.enum(FINDING_SORTS).default('rank'),
  dir: z.enum(['asc', 'desc']).default('asc'),
  offset: z.coerce.number().int().min(0).default(0),
  limit: z.coerce.number().int().min(1).max(500).default(25),
});
export type FindingsQuery = z.infer<typeof findingsQuery>;

/** Whether one finding passes the filters of `q` (everything but the group). */
export function matchesFilters(f: FindingItem, q: FindingsQuery): boolean {
  if (q.key && f.key !== q.key) return false;
  if (q.kind && f.kind !== q.kind) return false;
  if (q.severity && f.severity !== q.severity) return false;
  if (q.status && f.status !== q.status) return false;
  if (q.layer && !f.layer.split('+').includes(q.layer)) return false;
  if (q.assignee === 'none' ? f.assignee !== null : q.assignee && f.assignee?.id !== q.assignee) return false;
  if (q.q) {
    const needle = q.q.trim().toLowerCase();
    if (needle) {
      const hay = `${f.key} ${f.kind} ${f.cause} ${f.message} ${f.assignee?.name ?? ''} ${f.waiver?.reason ?? ''}`.toLowerCase();
      if (!hay.includes(needle)) return false;
    }
  }
  return true;
}

const SEVERITY_ORDER: Record<string, number> = { error: 0, warning: 1, info: 2 };
const STATUS_ORDER = Object.fromEntries(FINDING_STATUSES.map((s, i) => [s, i])) as Record<string, number>;

function compareItems(a: FindingItem, b: FindingItem, sort: FindingsQuery['sort']): number {
  switch (sort) {
    case 'kind':
      return a.kind.localeCompare(b.kind) || a.rank - b.rank;
    case 'status':
      return (STATUS_ORDER[a.status] ?? 9) - (STATUS_ORDER[b.status] ?? 9) || a.rank - b.rank;
    case 'measured':
      return a.measured - b.measured || a.rank - b.rank;
    case 'assignee':
      return (a.assignee?.name ?? '\uffff').localeCompare(b.assignee?.name ?? '\uffff') || a.rank - b.rank;
    default:
      return (SEVERITY_ORDER[a.severity] ?? 9) - (SEVERITY_ORDER[b.severity] ?? 9) || a.rank - b.rank;
  }
}

function compareGroups(a: GroupRow, b: GroupRow, sort: FindingsQuery['sort']): number {
  if (sort === 'count') return a.matching - b.matching || a.first.rank - b.first.rank;
  if (sort === 'status') return (STATUS_ORDER[a.status] ?? 9) - (STATUS_ORDER[b.status] ?? 9) || a.first.rank - b.first.rank;
  return compareItems(a.first, b.first, sort);
}

/** Row id of the located finding: its key (flat) or its group's id; null when filtered out or unknown. */
type Located = { located: string | null };
export type FindingsPage =
  | ({ view: 'flat'; total: number; offset: number; limit: number; items: FindingItem[] } & Located)
  | ({ view: 'groups'; total: number; offset: number; limit: number; items: GroupRow[]; findings: number } & Located);

/** The offset of the page that holds row `index`, or `fallback` when there is no such row. */
function pageOffset(index: number, limit: number, fallback: number): number {
  return index < 0 ? fallback : Math.floor(index / limit) * limit;
}

/** Groups of all findings, computed once per list (group ids do not depend on the filters). */
export function groupsOf(items: readonly GroupableFinding[]): FindingGroup[] {
  return groupFindings(items, { widthTolerance: 0.02, nearUm: 0 });
}

export function queryFindings(items: readonly FindingItem[], q: FindingsQuery, precomputed?: readonly FindingGroup[]): FindingsPage {
  let cached = precomputed;
  const groupList = () => (cached ??= groupsOf(items));
  const sign = q.dir === 'desc' ? -1 : 1;
  if (q.view === 'flat' || q.group) {
    let pool: readonly FindingItem[] = items;
    if (q.group) {
      const g = groupList().find((x) => x.id === q.group);
      const keys = new Set(g?.memberKeys ?? []);
      pool = items.filter((f) => keys.has(f.key));
    }
    const rows = pool.filter((f) => matchesFilters(f, q)).sort((a, b) => sign * compareItems(a, b, q.sort === 'count' ? 'rank' : q.sort));
    const at = q.locate ? rows.findIndex((f) => f.key === q.locate) : -1;
    const offset = pageOffset(at, q.limit, q.offset);
    return { view: 'flat', total: rows.length, offset, limit: q.limit, items: rows.slice(offset, offset + q.limit), located: at >= 0 ? (q.locate as string) : null };
  }
  const byKey = new Map(items.map((f) => [f.key, f]));
  const rows: GroupRow[] = [];
  let findings = 0;
  const groups = groupList();
  for (const g of groups) {
    const members = g.memberKeys.map((k) => byKey.get(k)).filter((f): f is FindingItem => f !== undefined);
    const matching = members.filter((f) => matchesFilters(f, q));
    if (matching.length === 0) continue;
    findings += matching.length;
    const statusCounts: Partial<Record<FindingStatus, number>> = {};
    for (const m of members) statusCounts[m.status] = (statusCounts[m.status] ?? 0) + 1;
    const statuses = Object.keys(statusCounts) as FindingStatus[];
    const { memberKeys: _k, ...rest } = g;
    rows.push({
      ...rest,
      matching: matching.length,
      status: statuses.length === 1 ? (statuses[0] as FindingStatus) : 'mixed',
      statusCounts,
      assignees: [...new Set(members.flatMap((m) => (m.assignee ? [m.assignee.name] : [])))],
      first: matching[0] as FindingItem,
    });
  }
  rows.sort((a, b) => sign * compareGroups(a, b, q.sort));
  let at = -1;
  if (q.locate) {
    const g = groups.find((x) => x.memberKeys.includes(q.locate as string));
    at = g ? rows.findIndex((r) => r.id === g.id) : -1;
  }
  const offset = pageOffset(at, q.limit, q.offset);
  return { view: 'groups', total: rows.length, offset, limit: q.limit, items: rows.slice(offset, offset + q.limit), findings, located: at >= 0 ? (rows[at] as GroupRow).id : null };
}
