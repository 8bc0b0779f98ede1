import { getDb } from '@/db/client';
import { authenticateRequest } from '@/lib/auth/request-access';
import { idParam } from '@/lib/data/schemas';
import { toErrorResponse } from '@/lib/http/errors';
import { requireRuleSetAccess } from '@/lib/models/access';
import { ruleSetPatchBody } from '@/lib/models/rule-set-schema';
import { getRuleSet, updateRuleSet } from '@/lib/models/rule-sets';

export const runtime = 'nodejs';
export const dynamic = 'force-dynamic';

type Ctx = { params: Promise<{ ruleSetId: string }> };

/** One rule set (members). */
export async function GET(request: Request, ctx: Ctx) {
  try {
    const id = idParam.parse((await ctx.params).ruleSetId);
    await requireRuleSetAccess(await authenticateRequest(request), id, 'team.read');
    return Response.json({ ruleSet: getRuleSet(getDb(), id) });
  } catch (error) {
    return toErrorResponse(error);
  }
}

/** Edit: `{ name?, description?, rules?, isDefault?, archived? }`. Analyses already run keep their stored settings ('model.publish'). */
export async function PATCH(request: Request, ctx: Ctx) {
  try {
    const id = idParam.parse((await ctx.params).ruleSetId);
    const { user } = await requireRuleSetAccess(await authenticateRequest(request), id, 'model.publish');
    return Response.json({ ruleSet: updateRuleSet(getDb(), { id, userId: user.id, body: ruleSetPatchBody.parse(await request.json()) }) });
  } catch (error) {
    return toErrorResponse(error);
  }
}
