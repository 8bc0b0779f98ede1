/**
 * GET handler of a derived table of a model version (width rules, density limits): members read it, the query is
 * validated by its zod schema, a target that does not fit the version is a field error, and the table comes as JSON or
 * as CSV (a '#' line naming the version and whether it is published, then the table's own CSV).
 */
import type { z } from 'zod';
import { getDb } from '@/db/client';
import { authenticateRequest } from '@/lib/auth/request-access';
import { idParam } from '@/lib/data/schemas';
import { ApiError, toErrorResponse } from '@/lib/http/errors';
import type { ProcessModel } from '@/lib/etch';
import { requireVersionAccess } from './access';
import { getVersion } from './versions';
import { isWidthTableError, type WidthTableError } from './width-table';

type Query = { kind: 'trench' | 'hole'; format: 'json' | 'csv' };
type Table = { targetDepthUm: number };

export function versionTableRoute<Q extends Query, T extends Table>(
  name: string,
  query: z.ZodType<Q>,
  build: (model: ProcessModel, q: Q) => T | WidthTableError,
  toCsv: (table: T) => string,
) {
  return async function GET(request: Request, ctx: { params: Promise<{ versionId: string }> }): Promise<Response> {
    try {
      const versionId = idParam.parse((await ctx.params).versionId);
      await requireVersionAccess(await authenticateRequest(request), versionId, 'team.read');
      const q = query.parse(Object.fromEntries(new URL(request.url).searchParams));
      const version = getVersion(getDb(), versionId);
      const t = build(version.document, q);
      if (isWidthTableError(t)) throw new ApiError('bad_request', `${t.field}: ${t.message}.`, { fieldErrors: { [t.field]: [t.message] } });
      const stem = `${name}-${version.model.key}-v${version.number}-${q.kind}-${t.targetDepthUm}um`;
      if (q.format === 'csv') {
        const status = version.status === 'draft' ? 'draft (not published)' : 'published';
        return new Response(`# ${version.model.name} v${version.number}, ${status}\n` + toCsv(t), {
          headers: { 'content-type': 'text/csv; charset=utf-8', 'content-disposition': `attachment; filename="${stem}.csv"` },
        });
      }
      return Response.json({ versionId, versionStatus: version.status, ...t }, { headers: { 'content-disposition': `inline; filename="${stem}.json"` } });
    } catch (error) {
      return toErrorResponse(error);
    }
  };
}
