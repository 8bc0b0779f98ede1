import { requireTeamAccess } from '@/lib/auth/request-access';
import { idParam, teamUpdateInput } from '@/lib/data/schemas';
import { getTeamOverview, renameTeam } from '@/lib/data/teams';
import { toErrorResponse } from '@/lib/http/errors';

export const runtime = 'nodejs';
export const dynamic = 'force-dynamic';

type Ctx = { params: Promise<{ teamId: string }> };

// Every handler here authenticates once (token or same-origin cookie, never both) and hands that user to the DAL.

/** Team with members (members only). */
export async function GET(request: Request, ctx: Ctx) {
  try {
    const teamId = idParam.parse((await ctx.params).teamId);
    const { user } = await requireTeamAccess(request, teamId, 'team.read');
    return Response.json(await getTeamOverview(teamId, user));
  } catch (error) {
    return toErrorResponse(error);
  }
}

/** Rename: `{ name }` ('team.manage'). */
export async function PATCH(request: Request, ctx: Ctx) {
  try {
    const teamId = idParam.parse((await ctx.params).teamId);
    const { user } = await requireTeamAccess(request, teamId, 'team.manage');
    await renameTeam(teamId, teamUpdateInput.parse(await request.json()), user);
    return Response.json({ ok: true });
  } catch (error) {
    return toErrorResponse(error);
  }
}
