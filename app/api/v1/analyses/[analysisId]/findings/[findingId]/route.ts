import { getDb } from '@/db/client';
import { idParam } from '@/lib/data/schemas';
import { toErrorResponse } from '@/lib/http/errors';
import { findingThread } from '@/lib/review/review-actions';
import { requireAnalysisAccess } from '@/lib/jobs/access';

export const runtime = 'nodejs';
export const dynamic = 'force-dynamic';

/** One finding's thread: comments, status changes and assignments, oldest first. */
export async function GET(request: Request, ctx: { params: Promise<{ analysisId: string; findingId: string }> }) {
  try {
    const p = await ctx.params;
    const analysisId = idParam.parse(p.analysisId);
    const findingId = idParam.parse(p.findingId);
    await requireAnalysisAccess(request, analysisId, 'project.read');
    return Response.json(findingThread(getDb(), analysisId, findingId));
  } catch (error) {
    return toErrorResponse(error);
  }
}
