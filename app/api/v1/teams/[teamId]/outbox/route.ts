import { requireTeamAccess } from '@/lib/auth/request-access';
import { listOutbox } from '@/lib/data/outbox';
import { idParam } from '@/lib/data/schemas';
import { toErrorResponse } from '@/lib/http/errors';

export const runtime = 'nodejs';
export const dynamic = 'force-dynamic';

/** Mail the development SMTP server kept for this team ('outbox.view'). */
export async function GET(request: Request, ctx: { params: Promise<{ teamId: string }> }) {
  try {
    const teamId = idParam.parse((await ctx.params).teamId);
    const { user } = await requireTeamAccess(request, teamId, 'outbox.view');
    return Response.json({ messages: await listOutbox(teamId, user) });
  } catch (error) {
    return toErrorResponse(error);
  }
}
