/**
 * Loads the findings of a finished analysis with their review state: the flag rows, the review rows, thread
 * sizes, assignee names and (through readFeatureColumns, the one bulk read path) the width of each finding's
 * opening for grouping by width class.
 */
import { and, count, eq } from 'drizzle-orm';
import type { Db } from '@/db/client';
import { analyses, analysisFlags, analysisSignoffs, findingEvents, findingReviews, memberships, projects, users, type AnalysisRow, type AnalysisSignoffRow } from '@/db/schema';
import { ApiError } from '@/lib/http/errors';
import { readFeatureColumns } from '@/lib/jobs/feature-columns';
import { groupsOf, type FindingItem } from './findings-query';
import type { FindingGroup } from './group-findings';
import type { Mentionable } from './mentions';

/** Widths by feature id of finished analyses; results never change once done, so a few are kept in memory. */
const widthCache = new Map<string, Map<number, number>>();
const WIDTH_CACHE_ENTRIES = 4;

function featureWidths(db: Db, analysisId: string): Map<number, number> {
  const hit = widthCache.get(analysisId);
  if (hit) return hit;
  const c = readFeatureColumns(db, analysisId);
  const m = new Map<number, number>();
  for (let i = 0; i < c.count; i++) m.set(c.featureId[i] as number, c.widthUm[i] as number);
  widthCache.set(analysisId, m);
  while (widthCache.size > WIDTH_CACHE_ENTRIES) widthCache.delete(widthCache.keys().next().value as string);
  return m;
}

/** The analysis, which must have finished; other states answer 409 naming the state. */
export function finishedAnalysisRow(db: Db, analysisId: string): AnalysisRow {
  const a = db.select().from(analyses).where(eq(analyses.id, analysisId)).get();
  if (!a) throw new ApiError('not_found', 'Analysis not found.');
  if (a.status !== 'done') throw new ApiError('conflict', `This analysis has no findings to review: it is ${a.status}.`);
  return a;
}

const fmt = (v: number) => String(Number(v.toPrecision(4)));

/** What crossed which limit: the grouping's "same cause". */
export function causeOf(f: { kind: string; flagKey: string; limit: number; unit: string; windowUm: number | null; stepUm: number | null }): string {
  if (f.kind === 'outside-calibrated-range') return `${f.flagKey.split(':').at(-1) ?? ''} outside calibration`;
  if (f.windowUm !== null && f.stepUm !== null) return `window ${fmt(f.windowUm)}/${fmt(f.stepUm)} µm, limit ${f.unit === 'fraction' ? `${fmt(f.limit * 100)} %` : f.unit === '%' ? `${fmt(f.limit)} %` : fmt(f.limit)}`;
  return f.unit === 'ratio' ? `limit ${fmt(f.limit)}:1` : `limit ${fmt(f.limit)} ${f.unit}`;
}

/** "1/0" or "1/0+2/0" from the stored settings. */
export function layerLabel(a: AnalysisRow): string {
  const layers = (a.settings as { etchLayers?: { layer: number; datatype: number }[] }).etchLayers ?? [];
  return layers.map((l) => `${l.layer}/${l.datatype}`).join('+') || '?';
}

type BaseItem = Omit<FindingItem, 'status' | 'assignee' | 'waiver' | 'events'>;

/**
 * Flags, widths and groups of finished analyses never change, so the static part of a findings list is kept for a
 * few analyses; each request only overlays the review state (statuses, assignees, waivers, thread sizes).
 */
const baseCache = new Map<string, { items: BaseItem[]; groups: FindingGroup[] }>();
const BASE_CACHE_ENTRIES = 4;

function baseFindings(db: Db, analysis: AnalysisRow): { items: BaseItem[]; groups: FindingGroup[] } {
  const cacheKey = `${analysis.id}:${analysis.finishedAt?.getTime() ?? 0}`;
  const hit = baseCache.get(cacheKey);
  if (hit) return hit;
  const flags = db.select().from(analysisFlags).where(eq(analysisFlags.analysisId, analysis.id)).orderBy(analysisFlags.rank).all();
  const widths = flags.some((f) => f.featureId !== null) ? featureWidths(db, analysis.id) : new Map<number, number>();
  const layer = layerLabel(analysis);
  const items = flags.map(
    (f): BaseItem => ({
      id: f.id,
      key: f.flagKey,
      rank: f.rank,
      kind: f.kind,
      severity: f.severity,
      cause: causeOf(f),
      layer,
      bboxUm: [f.x0Um, f.y0Um, f.x1Um, f.y1Um],
      atUm: [f.xUm, f.yUm],
      measured: f.measured,
      limit: f.limit,
      unit: f.unit,
      message: f.message,
      featureId: f.featureId,
      widthUm: f.featureId !== null ? (widths.get(f.featureId) ?? null) : null,
      uncertain: f.uncertain ?? null,
    }),
  );
  const entry = { items, groups: groupsOf(items) };
  baseCache.set(cacheKey, entry);
  while (baseCache.size > BASE_CACHE_ENTRIES) baseCache.delete(baseCache.keys().next().value as string);
  return entry;
}

/** The findings of a finished analysis with their review state (worst first), and their groups. */
export function loadFindings(db: Db, analysisId: string): { analysis: AnalysisRow; items: FindingItem[]; groups: FindingGroup[] } {
  const analysis = finishedAnalysisRow(db, analysisId);
  const base = baseFindings(db, analysis);
  const reviews = new Map(db.select().from(findingReviews).where(eq(findingReviews.analysisId, analysisId)).all().map((r) => [r.flagKey, r]));
  const eventCounts = new Map(
    db
      .select({ key: findingEvents.flagKey, n: count() })
      .from(findingEvents)
      .where(eq(findingEvents.analysisId, analysisId))
      .groupBy(findingEvents.flagKey)
      .all()
      .map((r) => [r.key, r.n]),
  );
  const names = reviews.size ? new Map(db.select({ id: users.id, name: users.name }).from(users).all().map((u) => [u.id, u.name])) : new Map<string, string>();
  const items = base.items.map((b): FindingItem => {
    const r = reviews.get(b.key);
    return {
      ...b,
      status: r?.status ?? 'open',
      assignee: r?.assigneeId ? { id: r.assigneeId, name: names.get(r.assigneeId) ?? 'former member' } : null,
      waiver:
        r?.waiverReason && r.status === 'waived'
          ? { reason: r.waiverReason, approverName: r.waiverApproverName ?? '', at: (r.waivedAt ?? r.updatedAt).toISOString(), carriedNote: r.carriedNote }
          : null,
      events: eventCounts.get(b.key) ?? 0,
    };
  });
  return { analysis, items, groups: base.groups };
}

/** Team members of the analysis's project, for assignment and @mentions. */
export function teamMembersOf(db: Db, teamId: string): (Mentionable & { role: string })[] {
  return db
    .select({ id: users.id, name: users.name, email: users.email, role: memberships.role })
    .from(memberships)
    .innerJoin(users, eq(users.id, memberships.userId))
    .where(eq(memberships.teamId, teamId))
    .orderBy(users.name)
    .all();
}

export function teamIdOfAnalysis(db: Db, analysisId: string): string {
  const row = db.select({ teamId: projects.teamId }).from(analyses).innerJoin(projects, eq(projects.id, analyses.projectId)).where(eq(analyses.id, analysisId)).get();
  if (!row) throw new ApiError('not_found', 'Analysis not found.');
  return row.teamId;
}

export function signoffOf(db: Db, analysisId: string): AnalysisSignoffRow | null {
  return db.select().from(analysisSignoffs).where(eq(analysisSignoffs.analysisId, analysisId)).get() ?? null;
}

/** Refuses changes to a signed-off analysis. */
export function assertNotSignedOff(db: Db, analysisId: string): void {
  const s = signoffOf(db, analysisId);
  if (s) {
    throw new ApiError(
      'conflict',
      `This analysis was signed off by ${s.signedByName} on ${s.signedAt.toISOString().slice(0, 16).replace('T', ' ')} UTC; changes need a new analysis.`,
    );
  }
}

export function findingByRowId(db: Db, analysisId: string, findingId: string) {
  const f = db
    .select()
    .from(analysisFlags)
    .where(and(eq(analysisFlags.analysisId, analysisId), eq(analysisFlags.id, findingId)))
    .get();
  if (!f) throw new ApiError('not_found', 'Finding not found.');
  return f;
}
