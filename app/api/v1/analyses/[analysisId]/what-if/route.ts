import { getDb } from '@/db/client';
import { idParam } from '@/lib/data/schemas';
import { toErrorResponse } from '@/lib/http/errors';
import { requireAnalysisAccess } from '@/lib/jobs/access';
import { saveWhatIf, whatIfSaveBody } from '@/lib/viewer/whatif-save';

export const runtime = 'nodejs';
export const dynamic = 'force-dynamic';

/**
 * Save a viewer what-if as a new analysis: `{ params: { timeMin, openRateUmPerMin, reactionProbability,
 * loadingCoefficient } }`. Queues the same revision with the stored settings and the analysis's model with these
 * values (recorded as derived). 202 with the new analysis and the changed parameters.
 */
export async function POST(request: Request, ctx: { params: Promise<{ analysisId: string }> }) {
  try {
    const analysisId = idParam.parse((await ctx.params).analysisId);
    const { user } = await requireAnalysisAccess(request, analysisId, 'analysis.create');
    const body = whatIfSaveBody.parse(await request.json());
    const { row, changes } = saveWhatIf(getDb(), { analysisId, userId: user.id, params: body.params });
    return Response.json(
      { analysis: { id: row.id, status: row.status, url: `/api/v1/analyses/${row.id}`, modelVersion: row.modelVersion }, changes },
      { status: 202, headers: { location: `/api/v1/analyses/${row.id}` } },
    );
  } catch (error) {
    return toErrorResponse(error);
  }
}
