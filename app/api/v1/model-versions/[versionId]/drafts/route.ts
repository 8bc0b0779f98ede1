import { getDb } from '@/db/client';
import { authenticateRequest } from '@/lib/auth/request-access';
import { idParam } from '@/lib/data/schemas';
import { toErrorResponse } from '@/lib/http/errors';
import { requireVersionAccess } from '@/lib/models/access';
import { createDraftFrom } from '@/lib/models/versions';

export const runtime = 'nodejs';
export const dynamic = 'force-dynamic';

type Ctx = { params: Promise<{ versionId: string }> };

/** Start a new draft of the same model from this version → 201 ('model.publish'). */
export async function POST(request: Request, ctx: Ctx) {
  try {
    const versionId = idParam.parse((await ctx.params).versionId);
    const { user } = await requireVersionAccess(await authenticateRequest(request), versionId, 'model.publish');
    return Response.json({ version: createDraftFrom(getDb(), { versionId, userId: user.id }) }, { status: 201 });
  } catch (error) {
    return toErrorResponse(error);
  }
}
