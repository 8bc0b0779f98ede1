import { getDb } from '@/db/client';
import { idParam } from '@/lib/data/schemas';
import { toErrorResponse } from '@/lib/http/errors';
import { immutableBinaryResponse } from '@/lib/http/immutable-binary';
import { requireAnalysisAccess } from '@/lib/jobs/access';
import { prepareFeatureFile, readFeatureColumns } from '@/lib/jobs/feature-columns';
import { encodeFeatures } from '@/lib/viewer/feature-wire';
import { viewerInfo } from '@/lib/viewer/viewer-source';

export const runtime = 'nodejs';
export const dynamic = 'force-dynamic';

/** Per-opening columns of a finished analysis as TRFEAT1 binary (lib/viewer/feature-wire.ts), for the what-if worker. */
export async function GET(request: Request, ctx: { params: Promise<{ analysisId: string }> }) {
  try {
    const analysisId = idParam.parse((await ctx.params).analysisId);
    await requireAnalysisAccess(request, analysisId, 'project.read');
    const db = getDb();
    viewerInfo(db, analysisId); // 404 / 409 before reading
    const etag = `"${analysisId}-features-1"`;
    // Results on S3: fetch the column file into the local cache without blocking the server.
    if (request.headers.get('if-none-match') !== etag) await prepareFeatureFile(db, analysisId);
    return immutableBinaryResponse(request, etag, 'application/vnd.trenchant.features', () => encodeFeatures(readFeatureColumns(db, analysisId)));
  } catch (error) {
    return toErrorResponse(error);
  }
}
