import { getDb } from '@/db/client';
import { idParam } from '@/lib/data/schemas';
import { toErrorResponse } from '@/lib/http/errors';
import { immutableBinaryResponse } from '@/lib/http/immutable-binary';
import { requireAnalysisAccess } from '@/lib/jobs/access';
import { readFlagColumns } from '@/lib/viewer/flag-source';
import { encodeFlags } from '@/lib/viewer/flag-wire';
import { viewerInfo } from '@/lib/viewer/viewer-source';

export const runtime = 'nodejs';
export const dynamic = 'force-dynamic';

/** Every flag of a finished analysis (positions, boxes, kinds, severities) as TRFLAG1 binary (lib/viewer/flag-wire.ts), for the canvas. */
export async function GET(request: Request, ctx: { params: Promise<{ analysisId: string }> }) {
  try {
    const analysisId = idParam.parse((await ctx.params).analysisId);
    await requireAnalysisAccess(request, analysisId, 'project.read');
    const db = getDb();
    viewerInfo(db, analysisId); // 404 / 409 before reading
    // A finished analysis's flags never change (reviews live in their own tables).
    return immutableBinaryResponse(request, `"${analysisId}-flags-1"`, 'application/vnd.trenchant.flags', () => encodeFlags(readFlagColumns(db, analysisId)));
  } catch (error) {
    return toErrorResponse(error);
  }
}
