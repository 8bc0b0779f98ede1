// `npm run storage:migrate`: copies an installation's layouts and results from its data folder to the S3 bucket set
// by TRENCHANT_S3_* (lib/storage/s3-config.ts), under the same keys, checking each copy (lib/storage/migrate.ts).
// Safe to run again: objects already in the bucket with the same bytes are skipped. Never deletes local files.
//   --data-dir DIR     the data folder (default: TRENCHANT_DATA_DIR, else the folder of TRENCHANT_DB, else ./data)
//   --concurrency N    files copied at once (default 4)
//   --quiet            no line per file, only the summary
//   --dry-run          only compare: list what would be copied, write nothing
//   --db FILE          the database, to report files it refers to that the data folder lacks (default TRENCHANT_DB)
// Exit status: 0 every file is in the bucket and checked; 1 some failed (each is named); 2 bad settings;
// 130 stopped by Ctrl-C (run it again to finish).
import { existsSync } from 'node:fs';
import path from 'node:path';
import Database from 'better-sqlite3';
import { databasePath } from '../db/client';
import { dataDir } from '../lib/jobs/paths';
import { storedKeysOf } from '../lib/jobs/warm-results';
import { migrateToS3, STORED_ROOTS, type MigrateEvent } from '../lib/storage/migrate';
import { describeS3, s3ConfigFromEnv } from '../lib/storage/s3-config';
import { S3ObjectStore } from '../lib/storage/s3-store';

const mb = (n: number) => (n >= 1024 * 1024 ? `${(n / 1024 / 1024).toFixed(1)} MiB` : n >= 1024 ? `${(n / 1024).toFixed(1)} KiB` : `${n} B`);

function usage(message: string): never {
  console.error(`storage:migrate: ${message}`);
  console.error('usage: npm run storage:migrate -- [--data-dir DIR] [--db FILE] [--concurrency N] [--quiet] [--dry-run]');
  process.exit(2);
}

const args = process.argv.slice(2);
let folder = '';
let concurrency = 4;
let quiet = false;
let dbFile = '';
let dryRun = false;
for (let i = 0; i < args.length; i++) {
  const a = args[i];
  if (a === '--data-dir') folder = args[++i] ?? usage('--data-dir needs a folder');
  else if (a === '--concurrency') {
    concurrency = Number(args[++i]);
    if (!Number.isInteger(concurrency) || concurrency < 1 || concurrency > 16) usage('--concurrency takes a whole number from 1 to 16');
  } else if (a === '--quiet') quiet = true;
  else if (a === '--dry-run') dryRun = true;
  else if (a === '--db') dbFile = args[++i] ?? usage('--db needs a file');
  else usage(`unknown option ${JSON.stringify(a)}`);
}

let config;
try {
  config = s3ConfigFromEnv();
} catch (err) {
  usage(err instanceof Error ? err.message : String(err));
}
if (!config) usage('TRENCHANT_S3_BUCKET is not set: set TRENCHANT_S3_* to the bucket the files should go to (README, "Object storage")');
const source = path.resolve(folder || dataDir());
const target = new S3ObjectStore(config);
try {
  await target.checkBucket();
} catch (err) {
  console.error(`storage:migrate: cannot use ${describeS3(config)}: ${err instanceof Error ? err.message : String(err)}`);
  process.exit(2);
}

const controller = new AbortController();
process.on('SIGINT', () => {
  if (controller.signal.aborted) process.exit(130);
  console.error('\nstorage:migrate: stopping after the files in progress (Ctrl-C again to stop now); run it again to finish');
  controller.abort();
});

console.log(`storage:migrate: ${source} → ${describeS3(config)}`);
let bytesDone = 0;
const started = Date.now();
const onEvent = (e: MigrateEvent) => {
  bytesDone += e.bytes;
  if (quiet && e.type !== 'failed') return;
  const where = `[${e.index}/${e.total}, ${mb(bytesDone)}]`;
  if (e.type === 'copied') console.log(`${where} copied  ${e.key} (${mb(e.bytes)}, checked by ${e.verifiedBy === 'etag' ? 'ETag' : 'reading it back'})`);
  else if (e.type === 'skipped') console.log(`${where} present ${e.key} (same size and checksum)`);
  else if (e.type === 'would-copy') console.log(`${where} to copy ${e.key} (${mb(e.bytes)}; missing from the bucket or different there)`);
  else console.error(`${where} FAILED  ${e.key}: ${e.message}`);
};

let summary;
try {
  summary = await migrateToS3(source, target, { concurrency, signal: controller.signal, onEvent, dryRun });
} catch (err) {
  console.error(`storage:migrate: ${err instanceof Error ? err.message : String(err)}`);
  process.exit(2);
} finally {
  target.client.destroy();
}

const seconds = ((Date.now() - started) / 1000).toFixed(1);
console.log(
  `\nstorage:migrate: ${summary.files} files: ${summary.copied} copied (${mb(summary.bytesCopied)}), ${summary.skipped} already present (${mb(summary.bytesSkipped)}), ${summary.failed.length} failed` +
    `${summary.notStarted ? `, ${summary.notStarted} not started` : ''}; ${seconds} s`,
);
if (summary.temporary) console.log(`  ${summary.temporary} temporary file(s) of writes in progress were not copied (stop the server before migrating)`);
if (summary.leftAlone.length) console.log(`  left in the data folder, not stored objects: ${summary.leftAlone.join(', ')}`);
reportUnbacked(dbFile || databasePath(), source);
if (summary.failed.length) {
  console.error('\nstorage:migrate: these files are NOT in the bucket; fix the cause and run it again (copied files are skipped):');
  for (const f of summary.failed) console.error(`  ${f.key}: ${f.message}`);
  process.exit(1);
}
if (dryRun) {
  console.log(`storage:migrate: dry run: ${summary.wouldCopy} file(s) would be copied; nothing was written`);
  process.exit(0);
}
if (summary.notStarted) {
  console.error('storage:migrate: stopped before every file was copied; run it again to finish');
  process.exit(130);
}
console.log(
  `storage:migrate: every stored file is in the bucket and checked. Local files were not removed: start the server with TRENCHANT_S3_*` +
    ` set, check a few analyses, then remove ${STORED_ROOTS.map((d) => path.join(source, d)).join(' and ')} yourself.`,
);


/** Files the database refers to that the data folder does not have (already missing before the move). */
function reportUnbacked(file: string, folder: string): void {
  if (!existsSync(file)) {
    console.log(`  no database at ${file}: not checked which files it refers to (--db FILE)`);
    return;
  }
  let keys: string[];
  try {
    const sqlite = new Database(file, { readonly: true, fileMustExist: true });
    try {
      keys = storedKeysOf(sqlite);
    } finally {
      sqlite.close();
    }
  } catch (err) {
    console.log(`  could not read the database ${file} to check the files it refers to: ${err instanceof Error ? err.message : String(err)}`);
    return;
  }
  const missing = keys.filter((k) => !existsSync(path.join(folder, ...k.split('/'))));
  console.log(`  the database refers to ${keys.length} stored files; ${missing.length === 0 ? 'all were in the data folder' : `${missing.length} were NOT in the data folder (they were missing before the move, and stay missing):`}`);
  for (const k of missing.slice(0, 50)) console.log(`    ${k}`);
  if (missing.length > 50) console.log(`    ... and ${missing.length - 50} more`);
}
