import { getDb } from '@/db/client';
import { idParam } from '@/lib/data/schemas';
import { toErrorResponse } from '@/lib/http/errors';
import { requireAnalysisAccess } from '@/lib/jobs/access';
import { compareAnalyses, compareQuery } from '@/lib/review/compare-store';

export const runtime = 'nodejs';
export const dynamic = 'force-dynamic';

/** Findings new / resolved / unchanged in this analysis against an earlier one of the same project (?with=ID). */
export async function GET(request: Request, ctx: { params: Promise<{ analysisId: string }> }) {
  try {
    const analysisId = idParam.parse((await ctx.params).analysisId);
    const q = compareQuery.parse(Object.fromEntries(new URL(request.url).searchParams));
    await requireAnalysisAccess(request, analysisId, 'project.read');
    await requireAnalysisAccess(request, q.with, 'project.read');
    return Response.json(compareAnalyses(getDb(), analysisId, q.with, q.toleranceUm));
  } catch (error) {
    return toErrorResponse(error);
  }
}
