import { getDb } from '@/db/client';
import { authenticateRequest } from '@/lib/auth/request-access';
import { toErrorResponse } from '@/lib/http/errors';
import { getPrefs, prefsBody, setPrefs } from '@/lib/review/notifications';

export const runtime = 'nodejs';
export const dynamic = 'force-dynamic';

/** Which notification kinds the caller gets by e-mail (in-app notifications always show). */
export async function GET(request: Request) {
  try {
    const { user } = await authenticateRequest(request);
    return Response.json(getPrefs(getDb(), user.id));
  } catch (error) {
    return toErrorResponse(error);
  }
}

export async function PUT(request: Request) {
  try {
    const { user } = await authenticateRequest(request);
    return Response.json(setPrefs(getDb(), user.id, prefsBody.parse(await request.json())));
  } catch (error) {
    return toErrorResponse(error);
  }
}
