import { Readable } from 'node:stream';
import { getDb } from '@/db/client';
import { idParam } from '@/lib/data/schemas';
import { ApiError, toErrorResponse } from '@/lib/http/errors';
import { requireAnalysisAccess } from '@/lib/jobs/access';
import { findMap, mapNameParam } from '@/lib/jobs/results';
import { storage } from '@/lib/storage';

export const runtime = 'nodejs';
export const dynamic = 'force-dynamic';

/**
 * One result map as a TRGRID1 file (little-endian float32 raster with its geometry; format in
 * lib/pipeline/grid-file.ts). The geometry is repeated in X-Trenchant-* headers. Results of a finished analysis
 * never change, so the response is cacheable for a year (private: it needs authorisation) with an ETag.
 */
export async function GET(request: Request, ctx: { params: Promise<{ analysisId: string; kind: string }> }) {
  try {
    const p = await ctx.params;
    const analysisId = idParam.parse(p.analysisId);
    const name = mapNameParam.parse(p.kind);
    await requireAnalysisAccess(request, analysisId, 'project.read');
    const { analysis, map } = findMap(getDb(), analysisId, name);
    const store = storage();
    const key = `${analysis.resultDir ?? ''}/${map.file}`;
    const st = await store.stat(key);
    if (!st) throw new ApiError('not_found', `The file of map "${map.name}" is missing from storage; run the analysis again.`);
    const etag = `"${analysisId}-${map.name}-${st.size}"`;
    const headers: Record<string, string> = {
      'cache-control': 'private, max-age=31536000, immutable',
      etag,
      'x-trenchant-map-kind': map.kind,
      'x-trenchant-map-unit': map.unit,
      'x-trenchant-grid': JSON.stringify({ x0Um: map.x0Um, y0Um: map.y0Um, pixelUm: map.pixelUm, nx: map.nx, ny: map.ny }),
      'x-trenchant-grid-units': 'um',
    };
    if (request.headers.get('if-none-match') === etag) return new Response(null, { status: 304, headers });
    const body = Readable.toWeb(await store.getStream(key)) as unknown as ReadableStream<Uint8Array>;
    return new Response(body, {
      headers: { ...headers, 'content-type': 'application/vnd.trenchant.grid', 'content-length': String(st.size), 'content-disposition': `inline; filename="${map.name}.trgrid"` },
    });
  } catch (error) {
    return toErrorResponse(error);
  }
}
