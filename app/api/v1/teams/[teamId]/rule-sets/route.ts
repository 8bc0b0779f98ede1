import { getDb } from '@/db/client';
import { requireTeamAccess } from '@/lib/auth/request-access';
import { idParam } from '@/lib/data/schemas';
import { toErrorResponse } from '@/lib/http/errors';
import { ruleSetBody } from '@/lib/models/rule-set-schema';
import { createRuleSet, listRuleSets } from '@/lib/models/rule-sets';

export const runtime = 'nodejs';
export const dynamic = 'force-dynamic';

type Ctx = { params: Promise<{ teamId: string }> };

/** The team's rule sets (`?archived=1` includes archived ones) (members). */
export async function GET(request: Request, ctx: Ctx) {
  try {
    const teamId = idParam.parse((await ctx.params).teamId);
    await requireTeamAccess(request, teamId, 'team.read');
    const includeArchived = new URL(request.url).searchParams.get('archived') === '1';
    return Response.json({ ruleSets: listRuleSets(getDb(), teamId, { includeArchived }) });
  } catch (error) {
    return toErrorResponse(error);
  }
}

/** New rule set: `{ name, description?, rules, isDefault? }` → 201 ('model.publish'). */
export async function POST(request: Request, ctx: Ctx) {
  try {
    const teamId = idParam.parse((await ctx.params).teamId);
    const { user } = await requireTeamAccess(request, teamId, 'model.publish');
    return Response.json({ ruleSet: createRuleSet(getDb(), { teamId, userId: user.id, body: ruleSetBody.parse(await request.json()) }) }, { status: 201 });
  } catch (error) {
    return toErrorResponse(error);
  }
}
