/**
 * With results on S3, the review pages of a finished analysis read its files through the local read cache
 * (lib/storage/read-cache.ts). Fetching them when the analysis completes, rather than when the first page asks,
 * keeps that first page from waiting on the bucket. Called wherever this server learns of a completion: finishJob
 * (embedded runs, and results recorded for workers without the database) and the BullMQ event relay (workers with
 * the database). A page that asks while a file is still coming waits for that same download (single-flight).
 */
import { getDb, type Db } from '@/db/client';
import { storage, type ObjectStore } from '@/lib/storage';
import { readablePath } from '@/lib/storage/read-cache';
import { analysisRelDir } from './paths';

/** Storage keys of an analysis's result files, as its index rows name them (maps, then the per-opening file). */
export function resultKeysOf(db: Db, analysisId: string): string[] {
  const sqlite = db.$client;
  const row = sqlite.prepare('SELECT result_dir FROM analyses WHERE id = ?').get(analysisId) as { result_dir: string | null } | undefined;
  if (!row) return [];
  const dir = row.result_dir ?? analysisRelDir(analysisId);
  const maps = sqlite.prepare('SELECT file FROM analysis_maps WHERE analysis_id = ? ORDER BY name').all(analysisId) as { file: string }[];
  const features = sqlite.prepare('SELECT file FROM analysis_feature_files WHERE analysis_id = ?').all(analysisId) as { file: string }[];
  return [...maps, ...features].map((r) => `${dir}/${r.file}`);
}

/** In-flight warm-ups by analysis, so one completion reported twice warms once. */
const warming = new Map<string, Promise<number>>();

/**
 * Fetches the analysis's result files into the read cache, one after another (downloads already running for a
 * page are joined, not repeated). Resolves to how many files are cached; never rejects: a file that cannot be
 * fetched now is fetched by the first read instead, so a failure is only logged. No-op on the local backend.
 */
export function warmResultCache(analysisId: string, options: { db?: Db; store?: ObjectStore } = {}): Promise<number> {
  const store = options.store ?? storage();
  if (store.kind === 'local') return Promise.resolve(0);
  const running = warming.get(analysisId);
  if (running) return running;
  const job = (async () => {
    let keys: string[];
    try {
      keys = resultKeysOf(options.db ?? getDb(), analysisId);
    } catch (err) {
      console.error(`[trenchant] could not list the result files of ${analysisId} to cache them:`, err instanceof Error ? err.message : err);
      return 0;
    }
    let cached = 0;
    for (const key of keys) {
      try {
        await readablePath(store, key);
        cached++;
      } catch (err) {
        console.error(`[trenchant] could not cache ${key} (it is fetched on first read instead):`, err instanceof Error ? err.message : err);
      }
    }
    return cached;
  })().finally(() => warming.delete(analysisId));
  warming.set(analysisId, job);
  return job;
}

/**
 * Every storage key the database refers to: each revision's layout and each analysis's result files. For
 * `npm run storage:migrate`, which reports the ones missing from the data folder. Takes the raw SQLite handle so
 * the script can open the database read-only.
 */
export function storedKeysOf(sqlite: Db['$client']): string[] {
  const layouts = sqlite.prepare('SELECT stored_path AS k FROM layout_revisions').all() as { k: string }[];
  const results = sqlite
    .prepare(
      `SELECT COALESCE(a.result_dir, 'analyses/' || a.id) || '/' || m.file AS k FROM analysis_maps m JOIN analyses a ON a.id = m.analysis_id
       UNION ALL
       SELECT COALESCE(a.result_dir, 'analyses/' || a.id) || '/' || f.file AS k FROM analysis_feature_files f JOIN analyses a ON a.id = f.analysis_id`,
    )
    .all() as { k: string }[];
  return [...new Set([...layouts, ...results].map((r) => r.k.split('\\').join('/')))].sort();
}
