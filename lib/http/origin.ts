import { ApiError } from './errors';

const SAFE_METHODS = new Set(['GET', 'HEAD', 'OPTIONS']);

/**
 * Cross-site request check for state-changing requests that carry cookies: the Origin header (or, failing that,
 * Referer) must name the same host as the Host header. A missing Origin and Referer is refused for unsafe methods:
 * browsers send Origin on every cross-site POST, and non-browser clients should use a Bearer token.
 *
 * There is no exemption for an Authorization header here: a request is exempt only where it is authenticated by
 * its token and nothing else (lib/auth/request-access.ts), and any cookie-authenticated path always runs this check.
 */
export function isSameOriginRequest(method: string, headers: Headers): boolean {
  if (SAFE_METHODS.has(method.toUpperCase())) return true;
  // Behind a reverse proxy that rewrites Host, set TRENCHANT_TRUST_PROXY=1 to compare with X-Forwarded-Host.
  const host = (process.env.TRENCHANT_TRUST_PROXY === '1' && headers.get('x-forwarded-host')) || headers.get('host');
  if (!host) return false;
  const source = headers.get('origin') ?? headers.get('referer');
  if (!source || source === 'null') return false;
  try {
    return new URL(source).host === host;
  } catch {
    return false;
  }
}

/** Throws ApiError 403 when `isSameOriginRequest` fails. Every cookie-authenticated non-GET handler calls it first. */
export function assertSameOrigin(request: Request): void {
  if (!isSameOriginRequest(request.method, request.headers)) {
    throw new ApiError('forbidden', 'Cross-site request refused: the Origin header does not match this site.');
  }
}
