/**
 * The public base URL of this instance (TRENCHANT_PUBLIC_URL): the only source of the host in links that leave
 * the server, such as invitation mails. It is never taken from the request's Host header, which the sender of
 * the request controls.
 */

export class PublicUrlError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'PublicUrlError';
  }
}

function isProduction(): boolean {
  return process.env.NODE_ENV === 'production';
}

/** Parses and normalises a configured public URL: http(s), no credentials, query or fragment; no trailing slash. */
export function parsePublicUrl(value: string): string {
  let url: URL;
  try {
    url = new URL(value);
  } catch {
    throw new PublicUrlError(`TRENCHANT_PUBLIC_URL "${value}" is not an absolute URL (e.g. https://trenchant.example.com).`);
  }
  if (url.protocol !== 'http:' && url.protocol !== 'https:') {
    throw new PublicUrlError(`TRENCHANT_PUBLIC_URL must start with http:// or https:// (got "${url.protocol}").`);
  }
  if (url.username || url.password || url.search || url.hash) {
    throw new PublicUrlError('TRENCHANT_PUBLIC_URL must not carry credentials, a query or a fragment.');
  }
  return `${url.origin}${url.pathname.replace(/\/+$/, '')}`;
}

/**
 * The base of every link in mail. TRENCHANT_PUBLIC_URL when set; in development (`next dev`) a loopback default
 * on PORT; in production without it, an error: a production server never builds mail links from the Host header.
 */
export function mailBaseUrl(): string {
  const configured = process.env.TRENCHANT_PUBLIC_URL?.trim();
  if (configured) return parsePublicUrl(configured);
  if (isProduction()) {
    throw new PublicUrlError(
      'TRENCHANT_PUBLIC_URL is not set, so no link can be put in a mail. Set it to the address people open Trenchant at.',
    );
  }
  return `http://localhost:${process.env.PORT || '3000'}`;
}

/**
 * Start-up check: a production server refuses to start without a valid TRENCHANT_PUBLIC_URL (`npm start` sets a
 * loopback default for the local demo; see scripts/start.mjs). Throws PublicUrlError with what to set.
 */
export function assertPublicUrlConfigured(): void {
  if (!isProduction()) return;
  mailBaseUrl();
}

/** Start-up guard (instrumentation.ts): without a usable public URL a production server stops with a message. */
export function exitUnlessPublicUrlConfigured(): void {
  try {
    assertPublicUrlConfigured();
  } catch (error) {
    if (!(error instanceof PublicUrlError)) throw error;
    console.error(`[trenchant] refusing to start: ${error.message}`);
    process.exit(1);
  }
}
