import { mailBaseUrl, PublicUrlError } from './public-url';

export { safeNextPath } from './safe-next';

/**
 * Base URL shown on pages (API examples, token help). The configured public URL when there is one; otherwise the
 * address the viewer used (display only: this value never goes into mail — see mailBaseUrl in ./public-url).
 */
export function publicBaseUrl(headers: Headers): string {
  try {
    return mailBaseUrl();
  } catch (error) {
    if (!(error instanceof PublicUrlError)) throw error;
  }
  const trustProxy = process.env.TRENCHANT_TRUST_PROXY === '1';
  const host = (trustProxy && headers.get('x-forwarded-host')) || headers.get('host') || '127.0.0.1:3000';
  const proto = (trustProxy && headers.get('x-forwarded-proto')) || 'http';
  return `${proto}://${host}`;
}
