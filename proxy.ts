import { NextResponse, type NextRequest } from 'next/server';
import { isSameOriginRequest } from '@/lib/http/origin';

/**
 * Runs before pages and server actions (not before /api: the matcher leaves it out so large layout uploads are
 * never buffered here, and every API handler calls assertSameOrigin itself). Refuses cross-site state-changing
 * requests and adds a few security headers. Authorisation is not done here; the DAL guard does it.
 */
export function proxy(request: NextRequest) {
  if (!isSameOriginRequest(request.method, request.headers)) {
    return new NextResponse('Cross-site request refused.', { status: 403, headers: { 'content-type': 'text/plain' } });
  }
  const response = NextResponse.next();
  response.headers.set('X-Content-Type-Options', 'nosniff');
  response.headers.set('X-Frame-Options', 'DENY');
  response.headers.set('Referrer-Policy', 'same-origin');
  return response;
}

export const config = {
  matcher: ['/((?!api/|_next/static|_next/image|favicon.ico|icon.svg).*)'],
};
