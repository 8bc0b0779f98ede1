// Security headers for every response, pages and API alike. Pages get their nonce-based content security policy
// from proxy.ts (a fresh nonce per response); API responses are data, never documents, so they get a policy that
// allows nothing.
const common = [
  { key: 'X-Content-Type-Options', value: 'nosniff' },
  { key: 'X-Frame-Options', value: 'DENY' },
  { key: 'Referrer-Policy', value: 'same-origin' },
];
// HSTS only when the request reached us over TLS: the TLS-terminating proxy says so with X-Forwarded-Proto
// (`next start` itself serves plain http). Browsers ignore HSTS received over plain http, so a client forging
// the header gains nothing.
const hsts = { key: 'Strict-Transport-Security', value: 'max-age=31536000; includeSubDomains' };
const apiCsp = { key: 'Content-Security-Policy', value: "default-src 'none'; frame-ancestors 'none'; base-uri 'none'; form-action 'none'; sandbox" };

/** @type {import('next').NextConfig} */
const nextConfig = {
  // Native and worker-thread packages stay outside the server bundle; they are loaded from node_modules at run time.
  serverExternalPackages: ['better-sqlite3', '@node-rs/argon2', 'piscina', 'smtp-server', 'nodemailer', 'clipper-lib', 'bullmq', 'ioredis', '@aws-sdk/client-s3', '@aws-sdk/lib-storage'],
  poweredByHeader: false,
  async headers() {
    return [
      { source: '/:path*', headers: common },
      { source: '/:path*', has: [{ type: 'header', key: 'x-forwarded-proto', value: 'https' }], headers: [hsts] },
      { source: '/api/:path*', headers: [apiCsp] },
    ];
  },
};
export default nextConfig;
