/**
 * Absolute base URL for links in e-mails: TRENCHANT_PUBLIC_URL when set, else derived from the request's Host
 * (and X-Forwarded-Proto when TRENCHANT_TRUST_PROXY=1).
 */
export function publicBaseUrl(headers: Headers): string {
  const configured = process.env.TRENCHANT_PUBLIC_URL;
  if (configured) return configured.replace(/\/$/, '');
  const trustProxy = process.env.TRENCHANT_TRUST_PROXY === '1';
  const host = (trustProxy && headers.get('x-forwarded-host')) || headers.get('host') || '127.0.0.1:3000';
  const proto = (trustProxy && headers.get('x-forwarded-proto')) || 'http';
  return `${proto}://${host}`;
}

/** A same-site path to continue to after sign-in, or '/projects' when `next` is missing or points elsewhere. */
export function safeNextPath(next: unknown): string {
  if (typeof next !== 'string' || !next.startsWith('/') || next.startsWith('//') || next.startsWith('/\\')) return '/projects';
  return next;
}
