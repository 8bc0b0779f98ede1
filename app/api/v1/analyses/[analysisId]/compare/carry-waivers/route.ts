import { getDb } from '@/db/client';
import { idParam } from '@/lib/data/schemas';
import { toErrorResponse } from '@/lib/http/errors';
import { requireAnalysisAccess } from '@/lib/jobs/access';
import { carryBody, carryWaivers } from '@/lib/review/compare-store';
import { reviewContext } from '@/lib/review/route-access';

export const runtime = 'nodejs';
export const dynamic = 'force-dynamic';

/** Copies the waivers of an earlier analysis onto this analysis's unchanged findings, each with a visible note. */
export async function POST(request: Request, ctx: { params: Promise<{ analysisId: string }> }) {
  try {
    const analysisId = idParam.parse((await ctx.params).analysisId);
    const { teamId, actor } = reviewContext(request, analysisId, await requireAnalysisAccess(request, analysisId, 'flag.waive'));
    const body = carryBody.parse(await request.json());
    await requireAnalysisAccess(request, body.from, 'project.read');
    return Response.json(carryWaivers(getDb(), { afterId: analysisId, beforeId: body.from, toleranceUm: body.toleranceUm, teamId, actor }));
  } catch (error) {
    return toErrorResponse(error);
  }
}
