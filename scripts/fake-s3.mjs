// A local fake S3 server (the s3rver package, a devDependency) for tests and the `npm run dev:s3` demo: objects are
// files in `directory`, the bucket exists from the start, and the credentials are s3rver's fixed pair. Loopback only.
// startFakeS3() returns the TRENCHANT_S3_* variables that point Trenchant at it (lib/storage/s3-config.ts).
import { mkdirSync } from 'node:fs';

export const FAKE_S3_CREDENTIALS = { accessKeyId: 'S3RVER', secretAccessKey: 'S3RVER' };

/**
 * @param {{ directory: string, bucket?: string, port?: number, log?: boolean }} options port 0 = any free port
 * @returns {Promise<{ endpoint: string, bucket: string, env: Record<string, string>, stop: () => Promise<void> }>}
 */
export async function startFakeS3({ directory, bucket = 'trenchant', port = 0, log = false }) {
  let S3rver;
  try {
    S3rver = (await import('s3rver')).default;
  } catch {
    throw new Error('the fake S3 server needs the dev dependencies: run `npm install` (s3rver is a devDependency)');
  }
  mkdirSync(directory, { recursive: true });
  const server = new S3rver({ address: '127.0.0.1', port, silent: !log, directory, configureBuckets: [{ name: bucket }] });
  const info = await server.run();
  const endpoint = `http://127.0.0.1:${info.port}`;
  return {
    endpoint,
    bucket,
    env: {
      TRENCHANT_S3_BUCKET: bucket,
      TRENCHANT_S3_ENDPOINT: endpoint,
      TRENCHANT_S3_REGION: 'us-east-1',
      TRENCHANT_S3_FORCE_PATH_STYLE: '1',
      TRENCHANT_S3_ACCESS_KEY_ID: FAKE_S3_CREDENTIALS.accessKeyId,
      TRENCHANT_S3_SECRET_ACCESS_KEY: FAKE_S3_CREDENTIALS.secretAccessKey,
    },
    stop: () => server.close(),
  };
}

// As a program (`node scripts/fake-s3.mjs <directory> [port]`): serve until stopped, printing one JSON line with
// the endpoint and the TRENCHANT_S3_* variables. Tests run it in its own process, because the synchronous read path
// (lib/storage/download-thread.ts) blocks the calling thread while it waits for the server.
if (process.argv[1] && import.meta.url === (await import('node:url')).pathToFileURL(process.argv[1]).href) {
  const [directory, port] = process.argv.slice(2);
  if (!directory) {
    console.error('usage: node scripts/fake-s3.mjs <directory> [port]');
    process.exit(2);
  }
  const s3 = await startFakeS3({ directory, port: Number(port ?? 0) });
  console.log(JSON.stringify({ endpoint: s3.endpoint, bucket: s3.bucket, env: s3.env }));
  const stop = () => void s3.stop().finally(() => process.exit(0));
  process.on('SIGTERM', stop);
  process.on('SIGINT', stop);
}
