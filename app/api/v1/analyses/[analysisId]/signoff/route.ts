import { getDb } from '@/db/client';
import { idParam } from '@/lib/data/schemas';
import { toErrorResponse } from '@/lib/http/errors';
import { requireAnalysisAccess } from '@/lib/jobs/access';
import { reviewContext } from '@/lib/review/route-access';
import { signOff, signoffBody, signoffState } from '@/lib/review/signoff';

export const runtime = 'nodejs';
export const dynamic = 'force-dynamic';

/** Whether the analysis is signed off, and if not, what still blocks it. */
export async function GET(request: Request, ctx: { params: Promise<{ analysisId: string }> }) {
  try {
    const analysisId = idParam.parse((await ctx.params).analysisId);
    await requireAnalysisAccess(request, analysisId, 'project.read');
    return Response.json(signoffState(getDb(), analysisId));
  } catch (error) {
    return toErrorResponse(error);
  }
}

/** Signs the analysis off (reviewer or admin): refused while an error finding is open or unwaived. */
export async function POST(request: Request, ctx: { params: Promise<{ analysisId: string }> }) {
  try {
    const analysisId = idParam.parse((await ctx.params).analysisId);
    const { teamId, actor } = reviewContext(request, analysisId, await requireAnalysisAccess(request, analysisId, 'revision.signoff'));
    const { note } = signoffBody.parse(await request.json().catch(() => ({})));
    return Response.json({ signoff: signOff(getDb(), { analysisId, teamId, actor, note }) }, { status: 201 });
  } catch (error) {
    return toErrorResponse(error);
  }
}
