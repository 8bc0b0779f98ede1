/**
 * Server start-up for the job system (called once from instrumentation.ts after the database bootstrap): remove
 * stray temporary uploads, put jobs interrupted by the last shutdown back in the queue, seed the demo analysis,
 * and start the queue (embedded pool, or BullMQ when TRENCHANT_REDIS_URL is set: lib/jobs/queue.ts). Never throws:
 * a problem here is logged and the server still starts.
 */
import { rm } from 'node:fs/promises';
import { getDb } from '@/db/client';
import { storage } from '@/lib/storage';
import { asS3Store } from '@/lib/storage/s3-store';
import { uploadTmpDir } from './paths';
import { jobQueue } from './queue';
import { seedDemoAnalysis } from './seed-demo-analysis';

export async function startJobs(log: (line: string) => void = (l) => console.log(l)): Promise<void> {
  try {
    await rm(uploadTmpDir(), { recursive: true, force: true });
    await checkStorage(log);
    const runner = jobQueue();
    const requeued = await runner.requeueInterrupted();
    if (requeued > 0) log(`[trenchant] ${requeued} analysis job(s) interrupted by the last shutdown are queued again`);
    if (process.env.TRENCHANT_DEMO !== '0') {
      if ((await import('@/lib/models/seed')).seedDemoModels(getDb()).seeded) log('[trenchant] demo team: published the sample process models and the demo rule set');
      const demo = await seedDemoAnalysis(getDb());
      if (demo.seeded) log('[trenchant] demo project: queued the analysis of the demo layout');
    }
    runner.pump();
    log(
      runner.kind === 'embedded'
        ? `[trenchant] analysis jobs: up to ${runner.concurrency} at a time`
        : '[trenchant] analysis jobs: queued on Redis (TRENCHANT_REDIS_URL); run them with `npm run worker`',
    );
  } catch (err) {
    console.error('[trenchant] could not start the analysis job system:', err);
  }
}

/** Says where files go, and whether the bucket answers (a wrong bucket or endpoint is named at start-up, not at the first upload). */
async function checkStorage(log: (line: string) => void): Promise<void> {
  const store = asS3Store(storage());
  if (!store) return;
  try {
    await store.checkBucket();
    log(`[trenchant] layouts and results are stored in ${store.where}`);
  } catch (err) {
    console.error(`[trenchant] object storage ${store.where} does not answer (${err instanceof Error ? `${err.name}: ${err.message}` : String(err)}); uploads and analyses will fail until it does`);
  }
}
