import { z } from 'zod';
import { requireUser } from '@/lib/auth/session';
import { acceptInvite } from '@/lib/data/invites';
import { toErrorResponse } from '@/lib/http/errors';
import { assertSameOrigin } from '@/lib/http/origin';

export const runtime = 'nodejs';

/** The signed-in user accepts an invitation addressed to their e-mail → `{ teamId, role }`. */
export async function POST(request: Request, ctx: { params: Promise<{ token: string }> }) {
  try {
    assertSameOrigin(request);
    const token = z.string().min(10).max(100).parse((await ctx.params).token);
    return Response.json(acceptInvite(token, await requireUser()));
  } catch (error) {
    return toErrorResponse(error);
  }
}
