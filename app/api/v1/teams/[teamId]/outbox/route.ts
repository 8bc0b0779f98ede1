import { listOutbox } from '@/lib/data/outbox';
import { idParam } from '@/lib/data/schemas';
import { toErrorResponse } from '@/lib/http/errors';

export const runtime = 'nodejs';
export const dynamic = 'force-dynamic';

/** Mail the development SMTP server kept for this team ('outbox.view'). */
export async function GET(_request: Request, ctx: { params: Promise<{ teamId: string }> }) {
  try {
    return Response.json({ messages: await listOutbox(idParam.parse((await ctx.params).teamId)) });
  } catch (error) {
    return toErrorResponse(error);
  }
}
