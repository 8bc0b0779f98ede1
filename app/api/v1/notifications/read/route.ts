import { getDb } from '@/db/client';
import { authenticateRequest } from '@/lib/auth/request-access';
import { toErrorResponse } from '@/lib/http/errors';
import { markRead, readBody } from '@/lib/review/notifications';

export const runtime = 'nodejs';
export const dynamic = 'force-dynamic';

/** Marks the caller's notifications read: {ids: [...]} or {all: true}. */
export async function POST(request: Request) {
  try {
    const { user } = await authenticateRequest(request);
    const body = readBody.parse(await request.json());
    return Response.json({ marked: markRead(getDb(), user.id, body) });
  } catch (error) {
    return toErrorResponse(error);
  }
}
