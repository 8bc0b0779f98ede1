/** Runs once when `next start` / `next dev` boots: migrate, seed the demo on an empty DB, start dev mail. */
export async function register(): Promise<void> {
  if (process.env.NEXT_RUNTIME !== 'nodejs') return;
  // `next build` also loads this file while collecting page data; no database or mail server then.
  if (process.env.NEXT_PHASE === 'phase-production-build') return;
  const { bootstrap } = await import('./lib/data/bootstrap');
  await bootstrap();
  await (await import('./lib/jobs/startup')).startJobs();
}
