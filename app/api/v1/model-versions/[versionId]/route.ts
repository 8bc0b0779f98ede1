import { getDb } from '@/db/client';
import { authenticateRequest } from '@/lib/auth/request-access';
import { idParam } from '@/lib/data/schemas';
import { toErrorResponse } from '@/lib/http/errors';
import { requireVersionAccess } from '@/lib/models/access';
import { updateDraftBody } from '@/lib/models/schemas';
import { deleteDraft, getVersion, updateDraft } from '@/lib/models/versions';

export const runtime = 'nodejs';
export const dynamic = 'force-dynamic';

type Ctx = { params: Promise<{ versionId: string }> };

/** One model version: the document, its status and the stored calibration (members). */
export async function GET(request: Request, ctx: Ctx) {
  try {
    const versionId = idParam.parse((await ctx.params).versionId);
    await requireVersionAccess(await authenticateRequest(request), versionId, 'team.read');
    return Response.json({ version: getVersion(getDb(), versionId) });
  } catch (error) {
    return toErrorResponse(error);
  }
}

/** Edit a draft: `{ document?, note?, calibration? }`; 409 for a published version ('model.publish'). */
export async function PATCH(request: Request, ctx: Ctx) {
  try {
    const versionId = idParam.parse((await ctx.params).versionId);
    await requireVersionAccess(await authenticateRequest(request), versionId, 'model.publish');
    return Response.json({ version: updateDraft(getDb(), { versionId, body: updateDraftBody.parse(await request.json()) }) });
  } catch (error) {
    return toErrorResponse(error);
  }
}

/** Discard a draft; 409 for a published version ('model.publish'). */
export async function DELETE(request: Request, ctx: Ctx) {
  try {
    const versionId = idParam.parse((await ctx.params).versionId);
    await requireVersionAccess(await authenticateRequest(request), versionId, 'model.publish');
    deleteDraft(getDb(), versionId);
    return new Response(null, { status: 204 });
  } catch (error) {
    return toErrorResponse(error);
  }
}
