import { z } from 'zod';
import { getDb } from '@/db/client';
import { idParam } from '@/lib/data/schemas';
import { toErrorResponse } from '@/lib/http/errors';
import { requireAnalysisAccess } from '@/lib/jobs/access';
import { renderMapPng } from '@/lib/jobs/preview-png';
import { findMap, mapNameParam } from '@/lib/jobs/results';
import { decodeGridBytes } from '@/lib/pipeline/grid-file-node';
import { storage } from '@/lib/storage';

export const runtime = 'nodejs';
export const dynamic = 'force-dynamic';

const query = z.object({ map: mapNameParam.default('risk'), size: z.coerce.number().int().min(64).max(2048).default(640) });

/** A static PNG of one map (?map=risk by default, or predicted-depth, effective-density, ...; ?size= longest side). */
export async function GET(request: Request, ctx: { params: Promise<{ analysisId: string }> }) {
  try {
    const analysisId = idParam.parse((await ctx.params).analysisId);
    const q = query.parse(Object.fromEntries(new URL(request.url).searchParams));
    await requireAnalysisAccess(request, analysisId, 'project.read');
    const { analysis, map } = findMap(getDb(), analysisId, q.map);
    const etag = `"${analysisId}-${map.name}-${q.size}-png"`;
    const headers = { 'cache-control': 'private, max-age=31536000, immutable', etag };
    if (request.headers.get('if-none-match') === etag) return new Response(null, { status: 304, headers });
    const key = `${analysis.resultDir ?? ''}/${map.file}`;
    const grid = decodeGridBytes(await storage().getBytes(key), key);
    const png = renderMapPng(grid, q.size);
    return new Response(png as unknown as BodyInit, { headers: { ...headers, 'content-type': 'image/png' } });
  } catch (error) {
    return toErrorResponse(error);
  }
}
