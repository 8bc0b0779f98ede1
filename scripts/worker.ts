// `npm run worker`: a BullMQ worker process for analysis jobs (lib/jobs/queue-worker.ts). Needs
// TRENCHANT_REDIS_URL and the server's files: its data folder (TRENCHANT_DATA_DIR) or, with layouts and results on
// S3, the same TRENCHANT_S3_* settings; and its database file (TRENCHANT_DB) unless TRENCHANT_WORKER_DB=none, when
// the server records what the worker reports (lib/jobs/remote-results.ts). TRENCHANT_JOB_CONCURRENCY sets how many analyses it
// runs at once. SIGTERM / Ctrl-C: finish the running analyses, then exit; a second signal exits at once (the jobs
// then go to another worker after the lock lapses).
import { startQueueWorker } from '../lib/jobs/queue-worker';
import { redisUrl } from '../lib/jobs/queue';
import { startTileQueueWorker } from '../lib/pipeline/tiled/tile-queue';

const url = redisUrl();
if (!url) {
  console.error('[trenchant] set TRENCHANT_REDIS_URL (e.g. redis://127.0.0.1:6379) to run a queue worker');
  process.exit(2);
}
const worker = await startQueueWorker(url);
// Tile jobs of tiled analyses (lib/pipeline/tiled/tile-queue.ts) from any server or worker, on
// TRENCHANT_TILE_THREADS threads (default 1); stored layouts come through lib/storage like the analyses' own.
const tileWorker = await startTileQueueWorker(url, { threads: Math.max(1, Number(process.env.TRENCHANT_TILE_THREADS) || 1), log: (l) => console.log(l) });
let stopping = false;
for (const signal of ['SIGINT', 'SIGTERM'] as const) {
  process.on(signal, () => {
    if (stopping) process.exit(1);
    stopping = true;
    console.log(`[trenchant] worker ${process.pid}: ${signal}, finishing the running analyses (send it again to stop now)`);
    void Promise.all([worker.close(), tileWorker.close()]).then(() => process.exit(0));
  });
}
