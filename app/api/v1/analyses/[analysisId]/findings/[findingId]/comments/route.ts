import { getDb } from '@/db/client';
import { idParam } from '@/lib/data/schemas';
import { toErrorResponse } from '@/lib/http/errors';
import { deliver } from '@/lib/review/notify';
import { addComment, commentBody } from '@/lib/review/review-actions';
import { requireAnalysisAccess } from '@/lib/jobs/access';
import { reviewContext } from '@/lib/review/route-access';

export const runtime = 'nodejs';
export const dynamic = 'force-dynamic';

/** Adds a plain-text comment; @handles of team members notify them. */
export async function POST(request: Request, ctx: { params: Promise<{ analysisId: string; findingId: string }> }) {
  try {
    const p = await ctx.params;
    const analysisId = idParam.parse(p.analysisId);
    const findingId = idParam.parse(p.findingId);
    const { teamId, actor, link } = reviewContext(request, analysisId, await requireAnalysisAccess(request, analysisId, 'flag.comment'));
    const { body } = commentBody.parse(await request.json());
    const r = addComment(getDb(), { analysisId, teamId, findingId, actor, body, link });
    await deliver(r.mails);
    return Response.json({ id: r.eventId, mentions: r.mentions }, { status: 201 });
  } catch (error) {
    return toErrorResponse(error);
  }
}
