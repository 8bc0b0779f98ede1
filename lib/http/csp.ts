/**
 * Content security policy of HTML pages: scripts only with this response's nonce (Next puts it on its own
 * scripts when it finds the nonce in the request's CSP header; 'strict-dynamic' lets those load their chunks).
 * The layout viewer (pixi.js) needs WebGL, which CSP does not restrict, workers from blob: or self, and images
 * and fetches of data:/blob: URLs. Styles allow 'unsafe-inline' because React renders style attributes, which
 * a nonce cannot cover; injected styles cannot run code.
 */
export function pageContentSecurityPolicy(nonce: string, options: { dev?: boolean; tls?: boolean } = {}): string {
  const directives = [
    "default-src 'self'",
    // React needs eval in development only, for its debugging stack traces (Next's CSP guide says so).
    `script-src 'self' 'nonce-${nonce}' 'strict-dynamic'${options.dev ? " 'unsafe-eval'" : ''}`,
    "style-src 'self' 'unsafe-inline'",
    "img-src 'self' data: blob:",
    "font-src 'self' data:",
    "connect-src 'self' data: blob:",
    "worker-src 'self' blob:",
    "object-src 'none'",
    "base-uri 'none'",
    "form-action 'self'",
    "frame-ancestors 'none'",
  ];
  if (options.tls) directives.push('upgrade-insecure-requests');
  return directives.join('; ');
}

/** 128 random bits, base64: a fresh one for every page response. */
export function createNonce(): string {
  return Buffer.from(crypto.getRandomValues(new Uint8Array(16))).toString('base64');
}
