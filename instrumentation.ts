/** Runs once when `next start` / `next dev` boots: migrate, seed the demo on an empty DB, start dev mail. */
export async function register(): Promise<void> {
  if (process.env.NEXT_RUNTIME !== 'nodejs') return;
  // `next build` also loads this file while collecting page data; no database or mail server then.
  if (process.env.NEXT_PHASE === 'phase-production-build') return;
  // Security: a production server needs TRENCHANT_PUBLIC_URL (mail links never come from the Host header), and
  // every request carries its TCP peer address for the sign-in limits.
  (await import('./lib/http/public-url')).exitUnlessPublicUrlConfigured();
  await (await import('./lib/http/client-address')).installPeerAddressHeader();
  const { bootstrap } = await import('./lib/data/bootstrap');
  await bootstrap();
  await (await import('./lib/jobs/startup')).startJobs();
}
