import { getDb } from '@/db/client';
import { idParam } from '@/lib/data/schemas';
import { toErrorResponse } from '@/lib/http/errors';
import { requireAnalysisAccess } from '@/lib/jobs/access';
import { getAnalysisView } from '@/lib/jobs/analyses';

export const runtime = 'nodejs';
export const dynamic = 'force-dynamic';

/** Status of an analysis: queued | running | done | failed | cancelled, stage, progress 0..1, error message. */
export async function GET(request: Request, ctx: { params: Promise<{ analysisId: string }> }) {
  try {
    const analysisId = idParam.parse((await ctx.params).analysisId);
    await requireAnalysisAccess(request, analysisId, 'project.read');
    return Response.json({ analysis: getAnalysisView(getDb(), analysisId) });
  } catch (error) {
    return toErrorResponse(error);
  }
}
