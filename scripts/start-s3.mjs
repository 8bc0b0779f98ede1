// `npm run dev:s3`: the app as `npm start` runs it, but with layouts and results in a local fake S3 server
// (scripts/fake-s3.mjs) instead of the data folder. Objects live in ./.fake-s3 (TRENCHANT_FAKE_S3_DIR), the fake
// server listens on 127.0.0.1:4568 (TRENCHANT_FAKE_S3_PORT), and the database is data/trenchant-s3.db unless
// TRENCHANT_DB is set (a database whose files are in the data folder would find none of them on S3).
// A BullMQ worker on another machine reaches the same files with the TRENCHANT_S3_* values printed below.
import { spawn } from 'node:child_process';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { startFakeS3 } from './fake-s3.mjs';

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');
const s3 = await startFakeS3({
  directory: path.resolve(root, process.env.TRENCHANT_FAKE_S3_DIR ?? '.fake-s3'),
  port: Number(process.env.TRENCHANT_FAKE_S3_PORT ?? 4568),
});
console.log(`[trenchant] fake S3 server at ${s3.endpoint}, bucket "${s3.bucket}" (objects in ${process.env.TRENCHANT_FAKE_S3_DIR ?? '.fake-s3'})`);
console.log(`[trenchant] ${Object.entries(s3.env).map(([k, v]) => `${k}=${v}`).join(' ')}`);
const env = { ...process.env, ...s3.env, TRENCHANT_DB: process.env.TRENCHANT_DB ?? path.join(root, 'data', 'trenchant-s3.db') };
const app = spawn(process.execPath, [path.join(root, 'scripts', 'start.mjs')], { cwd: root, stdio: 'inherit', env });
for (const signal of ['SIGINT', 'SIGTERM']) process.on(signal, () => app.kill(signal));
app.on('exit', (code, signal) => {
  void s3.stop().finally(() => process.exit(code ?? (signal ? 1 : 0)));
});
