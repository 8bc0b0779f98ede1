import { getDb } from '@/db/client';
import { idParam } from '@/lib/data/schemas';
import { toErrorResponse } from '@/lib/http/errors';
import { findingsCsv } from '@/lib/review/csv';
import { findingsQuery, queryFindings } from '@/lib/review/findings-query';
import { loadFindings } from '@/lib/review/findings-store';
import { requireAnalysisAccess } from '@/lib/jobs/access';

export const runtime = 'nodejs';
export const dynamic = 'force-dynamic';

/** Every stored finding (or those passing the same filters as the list) as CSV, one row per finding. */
export async function GET(request: Request, ctx: { params: Promise<{ analysisId: string }> }) {
  try {
    const analysisId = idParam.parse((await ctx.params).analysisId);
    const params = Object.fromEntries(new URL(request.url).searchParams);
    const q = findingsQuery.parse({ ...params, view: 'flat', offset: 0, limit: 500 });
    await requireAnalysisAccess(request, analysisId, 'project.read');
    const { analysis, items, groups } = loadFindings(getDb(), analysisId);
    const all = queryFindings(items, { ...q, limit: Number.MAX_SAFE_INTEGER }, groups).items as typeof items;
    const csv = findingsCsv(all, { analysisId, model: `${analysis.modelName} ${analysis.modelVersion}` });
    return new Response(csv, {
      headers: { 'content-type': 'text/csv; charset=utf-8', 'content-disposition': `attachment; filename="findings-${analysisId}.csv"` },
    });
  } catch (error) {
    return toErrorResponse(error);
  }
}
