import { z } from 'zod';
import { getDb } from '@/db/client';
import { idParam } from '@/lib/data/schemas';
import { toErrorResponse } from '@/lib/http/errors';
import { requireAnalysisAccess } from '@/lib/jobs/access';
import { queryPolygonsOffThread } from '@/lib/viewer/index-host';
import { encodePolygons } from '@/lib/viewer/polygon-wire';
import { layoutSourceFor } from '@/lib/viewer/viewer-source';

export const runtime = 'nodejs';
export const dynamic = 'force-dynamic';

const box = z
  .string()
  .transform((s) => s.split(',').map(Number))
  .refine((v) => v.length === 4 && v.every(Number.isFinite) && v[0]! < v[2]! && v[1]! < v[3]!, 'box must be x0,y0,x1,y1 in µm with x0 < x1 and y0 < y1')
  .transform((v) => v as [number, number, number, number]);
const query = z.object({ box, max: z.coerce.number().int().min(1).max(200_000).default(50_000) });

/**
 * Polygons of the analysed layout revision whose bounding box meets ?box= (µm), as TRPOLY1 binary
 * (lib/viewer/polygon-wire.ts). More than ?max= → only the count, so the client shows the coverage raster.
 */
export async function GET(request: Request, ctx: { params: Promise<{ analysisId: string }> }) {
  try {
    const analysisId = idParam.parse((await ctx.params).analysisId);
    const q = query.parse(Object.fromEntries(new URL(request.url).searchParams));
    await requireAnalysisAccess(request, analysisId, 'project.read');
    // The index is built and queried on a worker thread; this request waits without blocking others.
    const { polygons } = await queryPolygonsOffThread({ ...(await layoutSourceFor(getDb(), analysisId)), box: q.box, max: q.max });
    const body = encodePolygons(polygons);
    return new Response(body as unknown as BodyInit, { headers: { 'content-type': 'application/vnd.trenchant.polygons', 'cache-control': 'private, max-age=3600', 'content-length': String(body.byteLength) } });
  } catch (error) {
    return toErrorResponse(error);
  }
}
