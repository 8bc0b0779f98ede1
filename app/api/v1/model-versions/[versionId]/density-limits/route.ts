import { getDb } from '@/db/client';
import { authenticateRequest } from '@/lib/auth/request-access';
import { densityLimitsToCsv } from '@/lib/etch';
import { idParam } from '@/lib/data/schemas';
import { ApiError, toErrorResponse } from '@/lib/http/errors';
import { requireVersionAccess } from '@/lib/models/access';
import { densityLimitsQuery } from '@/lib/models/schemas';
import { getVersion } from '@/lib/models/versions';
import { densityTable, isWidthTableError } from '@/lib/models/width-table';

export const runtime = 'nodejs';
export const dynamic = 'force-dynamic';

type Ctx = { params: Promise<{ versionId: string }> };

/**
 * Density limits of a version: `?kind=trench|hole&targetDepthUm=&toleranceUm=&widthsUm=2,5,10&format=json|csv` —
 * per width the effective-density band keeping the depth within target ± tolerance, and depth over a density grid
 * (members).
 */
export async function GET(request: Request, ctx: Ctx) {
  try {
    const versionId = idParam.parse((await ctx.params).versionId);
    await requireVersionAccess(await authenticateRequest(request), versionId, 'team.read');
    const q = densityLimitsQuery.parse(Object.fromEntries(new URL(request.url).searchParams));
    const version = getVersion(getDb(), versionId);
    const table = densityTable(version.document, { kind: q.kind, targetDepthUm: q.targetDepthUm, toleranceUm: q.toleranceUm, widthsUm: q.widthsUm });
    if (isWidthTableError(table)) throw new ApiError('bad_request', `${table.field}: ${table.message}.`, { fieldErrors: { [table.field]: [table.message] } });
    const stem = `density-limits-${version.model.key}-v${version.number}-${q.kind}-${table.targetDepthUm}um`;
    const status = version.status === 'draft' ? 'draft (not published)' : 'published';
    if (q.format === 'csv') {
      return new Response(`# ${version.model.name} v${version.number}, ${status}\n` + densityLimitsToCsv(table), {
        headers: { 'content-type': 'text/csv; charset=utf-8', 'content-disposition': `attachment; filename="${stem}.csv"` },
      });
    }
    return Response.json({ versionId, versionStatus: version.status, ...table }, { headers: { 'content-disposition': `inline; filename="${stem}.json"` } });
  } catch (error) {
    return toErrorResponse(error);
  }
}
