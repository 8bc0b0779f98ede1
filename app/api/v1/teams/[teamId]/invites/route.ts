import { requireTeamAccess } from '@/lib/auth/request-access';
import { createInvite, listPendingInvites } from '@/lib/data/invites';
import { idParam, inviteInput } from '@/lib/data/schemas';
import { toErrorResponse } from '@/lib/http/errors';

export const runtime = 'nodejs';
export const dynamic = 'force-dynamic';

type Ctx = { params: Promise<{ teamId: string }> };

/** Pending invitations ('members.invite'). */
export async function GET(request: Request, ctx: Ctx) {
  try {
    const teamId = idParam.parse((await ctx.params).teamId);
    const { user } = await requireTeamAccess(request, teamId, 'members.invite');
    return Response.json({ invites: await listPendingInvites(teamId, user) });
  } catch (error) {
    return toErrorResponse(error);
  }
}

/** Invite: `{ email, role }` → 201 `{ invite }` and an e-mail with a link on TRENCHANT_PUBLIC_URL ('members.invite'). */
export async function POST(request: Request, ctx: Ctx) {
  try {
    const teamId = idParam.parse((await ctx.params).teamId);
    const { user } = await requireTeamAccess(request, teamId, 'members.invite');
    const invite = await createInvite(teamId, inviteInput.parse(await request.json()), user);
    return Response.json({ invite }, { status: 201 });
  } catch (error) {
    return toErrorResponse(error);
  }
}
