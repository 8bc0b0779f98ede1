import { getDb } from '@/db/client';
import { idParam } from '@/lib/data/schemas';
import { toErrorResponse } from '@/lib/http/errors';
import { requireAnalysisAccess } from '@/lib/jobs/access';
import { flagsQuery, listFlags } from '@/lib/jobs/results';

export const runtime = 'nodejs';
export const dynamic = 'force-dynamic';

/** Flags of a finished analysis, worst first (?severity=error|warning|info, ?kind=..., ?offset=, ?limit=). */
export async function GET(request: Request, ctx: { params: Promise<{ analysisId: string }> }) {
  try {
    const analysisId = idParam.parse((await ctx.params).analysisId);
    const q = flagsQuery.parse(Object.fromEntries(new URL(request.url).searchParams));
    await requireAnalysisAccess(request, analysisId, 'project.read');
    return Response.json(listFlags(getDb(), analysisId, q));
  } catch (error) {
    return toErrorResponse(error);
  }
}
