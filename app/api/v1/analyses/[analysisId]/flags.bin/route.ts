import { getDb } from '@/db/client';
import { idParam } from '@/lib/data/schemas';
import { toErrorResponse } from '@/lib/http/errors';
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
    const etag = `"${analysisId}-flags-1"`;
    const headers = { 'cache-control': 'private, max-age=31536000, immutable', etag };
    if (request.headers.get('if-none-match') === etag) return new Response(null, { status: 304, headers });
    const body = encodeFlags(readFlagColumns(db, analysisId));
    return new Response(body as unknown as BodyInit, { headers: { ...headers, 'content-type': 'application/vnd.trenchant.flags', 'content-length': String(body.byteLength) } });
  } catch (error) {
    return toErrorResponse(error);
  }
}
