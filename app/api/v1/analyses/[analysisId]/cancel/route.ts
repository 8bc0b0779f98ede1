import { getDb } from '@/db/client';
import { idParam } from '@/lib/data/schemas';
import { toErrorResponse } from '@/lib/http/errors';
import { requireAnalysisAccess } from '@/lib/jobs/access';
import { cancelAnalysis } from '@/lib/jobs/analyses';

export const runtime = 'nodejs';
export const dynamic = 'force-dynamic';

/**
 * Cancel a queued or running analysis (roles that may start analyses). 202 with the state: 'cancelled', or
 * 'running' while the worker stops (it reaches 'cancelled' within seconds; follow /events). 409 when finished.
 */
export async function POST(request: Request, ctx: { params: Promise<{ analysisId: string }> }) {
  try {
    const analysisId = idParam.parse((await ctx.params).analysisId);
    await requireAnalysisAccess(request, analysisId, 'analysis.create');
    return Response.json({ analysis: cancelAnalysis(getDb(), analysisId) }, { status: 202 });
  } catch (error) {
    return toErrorResponse(error);
  }
}
