import { getDb } from '@/db/client';
import { authenticateRequest } from '@/lib/auth/request-access';
import { toErrorResponse } from '@/lib/http/errors';
import { listNotifications } from '@/lib/review/notifications';

export const runtime = 'nodejs';
export const dynamic = 'force-dynamic';

/** The caller's notifications, newest first, with the unread count. */
export async function GET(request: Request) {
  try {
    const { user } = await authenticateRequest(request);
    return Response.json(listNotifications(getDb(), user.id));
  } catch (error) {
    return toErrorResponse(error);
  }
}
