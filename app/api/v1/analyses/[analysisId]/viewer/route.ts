import { getDb } from '@/db/client';
import { idParam } from '@/lib/data/schemas';
import { toErrorResponse } from '@/lib/http/errors';
import { requireAnalysisAccess } from '@/lib/jobs/access';
import { viewerInfo } from '@/lib/viewer/viewer-source';

export const runtime = 'nodejs';
export const dynamic = 'force-dynamic';

/** What the canvas viewer needs besides maps and flags: model, limits, layers, die box. */
export async function GET(request: Request, ctx: { params: Promise<{ analysisId: string }> }) {
  try {
    const analysisId = idParam.parse((await ctx.params).analysisId);
    await requireAnalysisAccess(request, analysisId, 'project.read');
    return Response.json(viewerInfo(getDb(), analysisId));
  } catch (error) {
    return toErrorResponse(error);
  }
}
