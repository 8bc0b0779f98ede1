/** @type {import('next').NextConfig} */
const nextConfig = {
  // Native and worker-thread packages stay outside the server bundle; they are loaded from node_modules at run time.
  serverExternalPackages: ['better-sqlite3', '@node-rs/argon2', 'piscina', 'smtp-server', 'nodemailer', 'clipper-lib'],
  poweredByHeader: false,
};
export default nextConfig;
