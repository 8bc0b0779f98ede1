import { createInvite, listPendingInvites } from '@/lib/data/invites';
import { idParam, inviteInput } from '@/lib/data/schemas';
import { publicBaseUrl } from '@/lib/http/base-url';
import { toErrorResponse } from '@/lib/http/errors';
import { assertSameOrigin } from '@/lib/http/origin';

export const runtime = 'nodejs';
export const dynamic = 'force-dynamic';

type Ctx = { params: Promise<{ teamId: string }> };

/** Pending invitations ('members.invite'). */
export async function GET(_request: Request, ctx: Ctx) {
  try {
    return Response.json({ invites: await listPendingInvites(idParam.parse((await ctx.params).teamId)) });
  } catch (error) {
    return toErrorResponse(error);
  }
}

/** Invite: `{ email, role }` → 201 `{ invite }` and an e-mail with the link ('members.invite'). */
export async function POST(request: Request, ctx: Ctx) {
  try {
    assertSameOrigin(request);
    const teamId = idParam.parse((await ctx.params).teamId);
    const invite = await createInvite(teamId, inviteInput.parse(await request.json()), publicBaseUrl(request.headers));
    return Response.json({ invite }, { status: 201 });
  } catch (error) {
    return toErrorResponse(error);
  }
}
