import { getDb } from '@/db/client';
import { idParam } from '@/lib/data/schemas';
import { toErrorResponse } from '@/lib/http/errors';
import { requireAnalysisAccess } from '@/lib/jobs/access';
import { readFeatureColumns } from '@/lib/jobs/feature-columns';
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
    const headers = { 'cache-control': 'private, max-age=31536000, immutable', etag };
    if (request.headers.get('if-none-match') === etag) return new Response(null, { status: 304, headers });
    const body = encodeFeatures(readFeatureColumns(db, analysisId));
    return new Response(body as unknown as BodyInit, { headers: { ...headers, 'content-type': 'application/vnd.trenchant.features', 'content-length': String(body.byteLength) } });
  } catch (error) {
    return toErrorResponse(error);
  }
}
