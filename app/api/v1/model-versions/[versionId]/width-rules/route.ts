import { getDb } from '@/db/client';
import { authenticateRequest } from '@/lib/auth/request-access';
import { widthRulesToCsv } from '@/lib/etch';
import { idParam } from '@/lib/data/schemas';
import { ApiError, toErrorResponse } from '@/lib/http/errors';
import { requireVersionAccess } from '@/lib/models/access';
import { widthRulesQuery } from '@/lib/models/schemas';
import { getVersion } from '@/lib/models/versions';
import { isWidthTableError, widthTable } from '@/lib/models/width-table';

export const runtime = 'nodejs';
export const dynamic = 'force-dynamic';

type Ctx = { params: Promise<{ versionId: string }> };

/**
 * Width-rule table of a version: `?kind=trench|hole&targetDepthUm=&toleranceUm=&density=&format=json|csv` —
 * width, predicted depth (± σ when calibrated), aspect ratio, margin, pass/fail and the minimum width reaching the
 * target (members).
 */
export async function GET(request: Request, ctx: Ctx) {
  try {
    const versionId = idParam.parse((await ctx.params).versionId);
    await requireVersionAccess(await authenticateRequest(request), versionId, 'team.read');
    const q = widthRulesQuery.parse(Object.fromEntries(new URL(request.url).searchParams));
    const version = getVersion(getDb(), versionId);
    const table = widthTable(version.document, { kind: q.kind, targetDepthUm: q.targetDepthUm, toleranceUm: q.toleranceUm, density: q.density });
    if (isWidthTableError(table)) throw new ApiError('bad_request', `${table.field}: ${table.message}.`, { fieldErrors: { [table.field]: [table.message] } });
    const stem = `width-rules-${version.model.key}-v${version.number}-${q.kind}-${table.targetDepthUm}um`;
    const status = version.status === 'draft' ? 'draft (not published)' : 'published';
    if (q.format === 'csv') {
      return new Response(`# ${version.model.name} v${version.number}, ${status}\n` + widthRulesToCsv(table), {
        headers: { 'content-type': 'text/csv; charset=utf-8', 'content-disposition': `attachment; filename="${stem}.csv"` },
      });
    }
    return Response.json({ versionId, versionStatus: version.status, ...table }, { headers: { 'content-disposition': `inline; filename="${stem}.json"` } });
  } catch (error) {
    return toErrorResponse(error);
  }
}
