import { getDb } from '@/db/client';
import { authenticateRequest } from '@/lib/auth/request-access';
import { idParam } from '@/lib/data/schemas';
import { toErrorResponse } from '@/lib/http/errors';
import { requireVersionAccess } from '@/lib/models/access';
import { diffVersions, getVersion } from '@/lib/models/versions';

export const runtime = 'nodejs';
export const dynamic = 'force-dynamic';

type Ctx = { params: Promise<{ versionId: string }> };

/** Parameter changes from `?against=<versionId>` (default: the version this one was drafted from) to this version (members). */
export async function GET(request: Request, ctx: Ctx) {
  try {
    const versionId = idParam.parse((await ctx.params).versionId);
    await requireVersionAccess(await authenticateRequest(request), versionId, 'team.read');
    const raw = new URL(request.url).searchParams.get('against');
    const db = getDb();
    const against = raw ? idParam.parse(raw) : getVersion(db, versionId).basedOnVersionId;
    if (!against) return Response.json({ from: null, to: getVersion(db, versionId), changes: [] });
    return Response.json(diffVersions(db, against, versionId));
  } catch (error) {
    return toErrorResponse(error);
  }
}
