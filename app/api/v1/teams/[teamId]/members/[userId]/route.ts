import { z } from 'zod';
import { requireTeamAccess } from '@/lib/auth/request-access';
import { idParam, roleChangeInput } from '@/lib/data/schemas';
import { changeMemberRole, removeMember } from '@/lib/data/teams';
import { toErrorResponse } from '@/lib/http/errors';

export const runtime = 'nodejs';

type Ctx = { params: Promise<{ teamId: string; userId: string }> };
const params = z.object({ teamId: idParam, userId: idParam });

/** Change role: `{ role }` ('team.manage'). */
export async function PATCH(request: Request, ctx: Ctx) {
  try {
    const { teamId, userId } = params.parse(await ctx.params);
    const { user } = await requireTeamAccess(request, teamId, 'team.manage');
    await changeMemberRole(teamId, userId, roleChangeInput.parse(await request.json()), user);
    return Response.json({ ok: true });
  } catch (error) {
    return toErrorResponse(error);
  }
}

/** Remove from the team and revoke their API tokens for it ('team.manage'). */
export async function DELETE(request: Request, ctx: Ctx) {
  try {
    const { teamId, userId } = params.parse(await ctx.params);
    const { user } = await requireTeamAccess(request, teamId, 'team.manage');
    await removeMember(teamId, userId, user);
    return new Response(null, { status: 204 });
  } catch (error) {
    return toErrorResponse(error);
  }
}
