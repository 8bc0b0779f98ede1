import { endSession, getCurrentSession, startSession } from '@/lib/auth/session';
import { authenticate } from '@/lib/data/accounts';
import { signInInput } from '@/lib/data/schemas';
import { clientAddress } from '@/lib/http/client-address';
import { ApiError, toErrorResponse } from '@/lib/http/errors';
import { assertSameOrigin } from '@/lib/http/origin';

export const runtime = 'nodejs';
export const dynamic = 'force-dynamic';

/**
 * Sign in: `{ email, password }` → 200 `{ user }` and the session cookie; 401 wrong; 429 while a backoff runs
 * (Retry-After). Cookie endpoint: no Authorization header, same-origin only.
 */
export async function POST(request: Request) {
  try {
    if (request.headers.get('authorization') !== null) throw new ApiError('bad_request', 'Sign-in takes no Authorization header.');
    assertSameOrigin(request);
    const user = await authenticate(signInInput.parse(await request.json()), clientAddress(request.headers));
    await startSession(user.id);
    return Response.json({ user });
  } catch (error) {
    return toErrorResponse(error);
  }
}

/** The current session's user, or 401. */
export async function GET() {
  const { user } = await getCurrentSession();
  if (!user) return Response.json({ error: { code: 'unauthorized', message: 'Sign in first.' } }, { status: 401 });
  return Response.json({ user });
}

/** Sign out (cookie endpoint: an Authorization header is refused, never combined with the cookie). */
export async function DELETE(request: Request) {
  try {
    if (request.headers.get('authorization') !== null) throw new ApiError('unauthorized', 'Sign-out takes the browser session only, not an API token.');
    assertSameOrigin(request);
    await endSession();
    return new Response(null, { status: 204 });
  } catch (error) {
    return toErrorResponse(error);
  }
}
