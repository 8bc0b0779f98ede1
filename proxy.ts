import { NextResponse, type NextRequest } from 'next/server';
import { createNonce, pageContentSecurityPolicy } from '@/lib/http/csp';
import { isSameOriginRequest } from '@/lib/http/origin';

/**
 * Runs before pages and server actions (not before /api: the matcher leaves it out so large layout uploads are
 * never buffered here, and every API handler does its own Origin check through lib/auth/request-access).
 * Refuses cross-site state-changing requests and sets the page's nonce-based content security policy; the
 * other security headers (nosniff, frame denial, Referrer-Policy, HSTS) come from next.config.mjs for every path.
 * Authorisation is not done here; the DAL guard does it.
 */
export function proxy(request: NextRequest) {
  if (!isSameOriginRequest(request.method, request.headers)) {
    return new NextResponse('Cross-site request refused.', { status: 403, headers: { 'content-type': 'text/plain' } });
  }
  const nonce = createNonce();
  const csp = pageContentSecurityPolicy(nonce, {
    dev: process.env.NODE_ENV === 'development',
    tls: request.headers.get('x-forwarded-proto') === 'https' || request.nextUrl.protocol === 'https:',
  });
  // Next reads the nonce from the request's CSP header while rendering and stamps it on its scripts.
  const requestHeaders = new Headers(request.headers);
  requestHeaders.set('x-nonce', nonce);
  requestHeaders.set('Content-Security-Policy', csp);
  const response = NextResponse.next({ request: { headers: requestHeaders } });
  response.headers.set('Content-Security-Policy', csp);
  return response;
}

export const config = {
  matcher: ['/((?!api/|_next/static|_next/image|favicon.ico|icon.svg).*)'],
};
