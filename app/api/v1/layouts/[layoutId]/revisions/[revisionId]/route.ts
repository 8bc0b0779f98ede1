import { getDb } from '@/db/client';
import { idParam } from '@/lib/data/schemas';
import { ApiError, toErrorResponse } from '@/lib/http/errors';
import { requireLayoutAccess } from '@/lib/jobs/access';
import { getRevision } from '@/lib/uploads/layouts';

export const runtime = 'nodejs';
export const dynamic = 'force-dynamic';

/** One revision with its layer table (layer/datatype, polygon and point counts), hash, size and format. */
export async function GET(request: Request, ctx: { params: Promise<{ layoutId: string; revisionId: string }> }) {
  try {
    const p = await ctx.params;
    const layoutId = idParam.parse(p.layoutId);
    const revisionId = idParam.parse(p.revisionId);
    await requireLayoutAccess(request, layoutId, 'project.read');
    const revision = getRevision(getDb(), revisionId);
    if (revision.layoutId !== layoutId) throw new ApiError('not_found', 'Layout revision not found.');
    return Response.json({ revision });
  } catch (error) {
    return toErrorResponse(error);
  }
}
