import { idParam, teamUpdateInput } from '@/lib/data/schemas';
import { getTeamOverview, renameTeam } from '@/lib/data/teams';
import { toErrorResponse } from '@/lib/http/errors';
import { assertSameOrigin } from '@/lib/http/origin';

export const runtime = 'nodejs';
export const dynamic = 'force-dynamic';

type Ctx = { params: Promise<{ teamId: string }> };

/** Team with members (members only). */
export async function GET(_request: Request, ctx: Ctx) {
  try {
    return Response.json(await getTeamOverview(idParam.parse((await ctx.params).teamId)));
  } catch (error) {
    return toErrorResponse(error);
  }
}

/** Rename: `{ name }` ('team.manage'). */
export async function PATCH(request: Request, ctx: Ctx) {
  try {
    assertSameOrigin(request);
    const teamId = idParam.parse((await ctx.params).teamId);
    await renameTeam(teamId, teamUpdateInput.parse(await request.json()));
    return Response.json({ ok: true });
  } catch (error) {
    return toErrorResponse(error);
  }
}
