import { getDb } from '@/db/client';
import { idParam } from '@/lib/data/schemas';
import { toErrorResponse } from '@/lib/http/errors';
import { findingsQuery, queryFindings } from '@/lib/review/findings-query';
import { loadFindings, teamMembersOf } from '@/lib/review/findings-store';
import { requireAnalysisAccess } from '@/lib/jobs/access';
import { reviewContext } from '@/lib/review/route-access';
import { signoffState } from '@/lib/review/signoff';
import { can } from '@/lib/auth/permissions';

export const runtime = 'nodejs';
export const dynamic = 'force-dynamic';

/**
 * Findings of a finished analysis with their review state, grouped (?view=groups, default) or one per row
 * (?view=flat, or ?group=ID for one group's members); filtered, sorted and paged here on the server.
 */
export async function GET(request: Request, ctx: { params: Promise<{ analysisId: string }> }) {
  try {
    const analysisId = idParam.parse((await ctx.params).analysisId);
    const q = findingsQuery.parse(Object.fromEntries(new URL(request.url).searchParams));
    const { teamId, role } = reviewContext(request, analysisId, await requireAnalysisAccess(request, analysisId, 'project.read'));
    const db = getDb();
    const loaded = loadFindings(db, analysisId);
    const { analysis, items } = loaded;
    const page = queryFindings(items, q, loaded.groups);
    const summaryFlags = (analysis.summary as { flags?: { total?: number; counts?: Record<string, Record<string, number>> } } | null)?.flags;
    const counted = summaryFlags?.total ?? items.length;
    const listedByKind = new Map<string, number>();
    for (const f of items) listedByKind.set(f.kind, (listedByKind.get(f.kind) ?? 0) + 1);
    // kinds whose list is short of what the pipeline counted (only when the list was capped)
    const shortKinds = Object.entries(summaryFlags?.counts ?? {})
      .map(([kind, c]) => ({ kind, counted: Object.values(c).reduce((a, b) => a + b, 0), listed: listedByKind.get(kind) ?? 0 }))
      .filter((k) => k.counted > k.listed);
    return Response.json({
      analysisId,
      ...page,
      /** Findings stored for review, and how many the pipeline counted (more when the list was capped). */
      listed: items.length,
      counted,
      capped: counted > items.length,
      shortKinds,
      kinds: [...new Set(items.map((f) => f.kind))].sort(),
      layers: [...new Set(items.flatMap((f) => f.layer.split('+')))].sort(),
      members: teamMembersOf(db, teamId).map((m) => ({ id: m.id, name: m.name, handle: m.email.split('@')[0] ?? '' })),
      signoff: signoffState(db, analysisId, loaded),
      can: {
        comment: can(role, 'flag.comment'),
        triage: can(role, 'flag.triage'),
        waive: can(role, 'flag.waive'),
        verify: can(role, 'flag.verify'),
        signoff: can(role, 'revision.signoff'),
      },
    });
  } catch (error) {
    return toErrorResponse(error);
  }
}
