import { getDb } from '@/db/client';
import { idParam } from '@/lib/data/schemas';
import { toErrorResponse } from '@/lib/http/errors';
import { requireAnalysisAccess } from '@/lib/jobs/access';
import { prepareFeatureFile } from '@/lib/jobs/feature-columns';
import { getResults, pageQuery } from '@/lib/jobs/results';

export const runtime = 'nodejs';
export const dynamic = 'force-dynamic';

/** Summary, map index and per-opening results (paged: ?offset=&limit=, at most 5000) of a finished analysis. */
export async function GET(request: Request, ctx: { params: Promise<{ analysisId: string }> }) {
  try {
    const analysisId = idParam.parse((await ctx.params).analysisId);
    const page = pageQuery.parse(Object.fromEntries(new URL(request.url).searchParams));
    await requireAnalysisAccess(request, analysisId, 'project.read');
    await prepareFeatureFile(getDb(), analysisId); // results on S3: into the local cache without blocking
    return Response.json(getResults(getDb(), analysisId, page));
  } catch (error) {
    return toErrorResponse(error);
  }
}
