import { z } from 'zod';
import { idParam, roleChangeInput } from '@/lib/data/schemas';
import { changeMemberRole, removeMember } from '@/lib/data/teams';
import { toErrorResponse } from '@/lib/http/errors';
import { assertSameOrigin } from '@/lib/http/origin';

export const runtime = 'nodejs';

type Ctx = { params: Promise<{ teamId: string; userId: string }> };
const params = z.object({ teamId: idParam, userId: idParam });

/** Change role: `{ role }` ('team.manage'). */
export async function PATCH(request: Request, ctx: Ctx) {
  try {
    assertSameOrigin(request);
    const { teamId, userId } = params.parse(await ctx.params);
    await changeMemberRole(teamId, userId, roleChangeInput.parse(await request.json()));
    return Response.json({ ok: true });
  } catch (error) {
    return toErrorResponse(error);
  }
}

/** Remove from the team ('team.manage'). */
export async function DELETE(request: Request, ctx: Ctx) {
  try {
    assertSameOrigin(request);
    const { teamId, userId } = params.parse(await ctx.params);
    await removeMember(teamId, userId);
    return new Response(null, { status: 204 });
  } catch (error) {
    return toErrorResponse(error);
  }
}
