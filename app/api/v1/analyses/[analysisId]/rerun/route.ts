import { getDb } from '@/db/client';
import { idParam } from '@/lib/data/schemas';
import { toErrorResponse } from '@/lib/http/errors';
import { requireAnalysisAccess } from '@/lib/jobs/access';
import { rerunAnalysis } from '@/lib/jobs/rerun';

export const runtime = 'nodejs';
export const dynamic = 'force-dynamic';

/** Run a finished, failed or cancelled analysis again with its stored settings and model. 202 with the new one. */
export async function POST(request: Request, ctx: { params: Promise<{ analysisId: string }> }) {
  try {
    const analysisId = idParam.parse((await ctx.params).analysisId);
    const { user } = await requireAnalysisAccess(request, analysisId, 'analysis.create');
    const row = rerunAnalysis(getDb(), { analysisId, userId: user.id });
    return Response.json(
      { analysis: { id: row.id, status: row.status, url: `/api/v1/analyses/${row.id}`, events: `/api/v1/analyses/${row.id}/events` } },
      { status: 202, headers: { location: `/api/v1/analyses/${row.id}` } },
    );
  } catch (error) {
    return toErrorResponse(error);
  }
}
