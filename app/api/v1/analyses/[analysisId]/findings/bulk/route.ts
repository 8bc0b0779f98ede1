import { getDb } from '@/db/client';
import { idParam } from '@/lib/data/schemas';
import { toErrorResponse } from '@/lib/http/errors';
import { loadFindings } from '@/lib/review/findings-store';
import { deliver } from '@/lib/review/notify';
import { changeBody, changeFindings } from '@/lib/review/review-actions';
import { requireAnalysisAccess } from '@/lib/jobs/access';
import { reviewContext } from '@/lib/review/route-access';

export const runtime = 'nodejs';
export const dynamic = 'force-dynamic';

/**
 * Sets the status and/or assignee of findings: listed keys plus every member of the listed groups. The role
 * needed depends on the status (waive: reviewer or admin; verify: reviewer or admin; the rest: any member with
 * flag.triage); a waiver needs a written reason.
 */
export async function POST(request: Request, ctx: { params: Promise<{ analysisId: string }> }) {
  try {
    const analysisId = idParam.parse((await ctx.params).analysisId);
    const { teamId, actor, link } = reviewContext(request, analysisId, await requireAnalysisAccess(request, analysisId, 'project.read'));
    const body = changeBody.parse(await request.json());
    const db = getDb();
    const keys = [...body.keys];
    if (body.groupIds.length) {
      const { groups } = loadFindings(db, analysisId);
      for (const id of body.groupIds) {
        const g = groups.find((x) => x.id === id);
        if (!g) return Response.json({ error: { code: 'not_found', message: `No group "${id}" in this analysis.` } }, { status: 404 });
        keys.push(...g.memberKeys);
      }
    }
    const r = changeFindings(db, { analysisId, teamId, actor, keys, status: body.status, assigneeId: body.assigneeId, reason: body.reason, link });
    await deliver(r.mails);
    return Response.json({ changed: r.changed, requested: new Set(keys).size });
  } catch (error) {
    return toErrorResponse(error);
  }
}

