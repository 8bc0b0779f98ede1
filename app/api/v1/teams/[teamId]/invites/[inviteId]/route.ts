import { z } from 'zod';
import { requireTeamAccess } from '@/lib/auth/request-access';
import { cancelInvite } from '@/lib/data/invites';
import { idParam } from '@/lib/data/schemas';
import { toErrorResponse } from '@/lib/http/errors';

export const runtime = 'nodejs';

const params = z.object({ teamId: idParam, inviteId: idParam });

/** Cancel a pending invitation → 204; its link stops working at once ('members.invite'). */
export async function DELETE(request: Request, ctx: { params: Promise<{ teamId: string; inviteId: string }> }) {
  try {
    const { teamId, inviteId } = params.parse(await ctx.params);
    const { user } = await requireTeamAccess(request, teamId, 'members.invite');
    await cancelInvite(teamId, inviteId, user);
    return new Response(null, { status: 204 });
  } catch (error) {
    return toErrorResponse(error);
  }
}
