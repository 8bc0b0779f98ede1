import { startSession } from '@/lib/auth/session';
import { clientAddress } from '@/lib/http/client-address';
import { signUp } from '@/lib/data/accounts';
import { signUpInput } from '@/lib/data/schemas';
import { ApiError, toErrorResponse } from '@/lib/http/errors';
import { assertSameOrigin } from '@/lib/http/origin';

export const runtime = 'nodejs';

/** Create an account: `{ name, email, password, teamName? }` → 201 `{ user }` and the session cookie. */
export async function POST(request: Request) {
  try {
    if (request.headers.get('authorization') !== null) throw new ApiError('bad_request', 'Sign-up takes no Authorization header.');
    assertSameOrigin(request);
    const user = await signUp(signUpInput.parse(await request.json()), clientAddress(request.headers));
    await startSession(user.id);
    return Response.json({ user }, { status: 201 });
  } catch (error) {
    return toErrorResponse(error);
  }
}
