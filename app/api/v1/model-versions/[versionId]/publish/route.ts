import { getDb } from '@/db/client';
import { authenticateRequest } from '@/lib/auth/request-access';
import { recordAudit } from '@/lib/data/audit';
import { idParam } from '@/lib/data/schemas';
import { toErrorResponse } from '@/lib/http/errors';
import { requireVersionAccess } from '@/lib/models/access';
import { publishVersion } from '@/lib/models/versions';

export const runtime = 'nodejs';
export const dynamic = 'force-dynamic';

type Ctx = { params: Promise<{ versionId: string }> };

/** Publish a draft; from then on it never changes and analyses may use it ('model.publish'). */
export async function POST(request: Request, ctx: Ctx) {
  try {
    const versionId = idParam.parse((await ctx.params).versionId);
    const { user, teamId } = await requireVersionAccess(await authenticateRequest(request), versionId, 'model.publish');
    const version = publishVersion(getDb(), { versionId, userId: user.id });
    recordAudit({ actorId: user.id, teamId, action: 'model.publish', target: versionId, detail: { model: version.model.name, version: version.number } });
    return Response.json({ version });
  } catch (error) {
    return toErrorResponse(error);
  }
}
