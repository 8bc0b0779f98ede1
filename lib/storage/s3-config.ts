/**
 * S3-compatible object storage settings from the environment. Storage is on S3 when TRENCHANT_S3_BUCKET is set:
 *   TRENCHANT_S3_BUCKET            bucket name (required for S3; unset = the local data folder)
 *   TRENCHANT_S3_ENDPOINT          e.g. http://127.0.0.1:4568 for a local or self-hosted server (unset = AWS)
 *   TRENCHANT_S3_REGION            default AWS_REGION, else us-east-1
 *   TRENCHANT_S3_FORCE_PATH_STYLE  1 = http://host/bucket/key addressing; default 1 when an endpoint is set
 *   TRENCHANT_S3_ACCESS_KEY_ID, TRENCHANT_S3_SECRET_ACCESS_KEY   optional; unset = the AWS SDK's usual chain
 *                                  (AWS_ACCESS_KEY_ID / AWS_SECRET_ACCESS_KEY, profiles, instance roles)
 *   TRENCHANT_S3_PREFIX            optional key prefix inside the bucket, e.g. "trenchant/" to share a bucket
 * The options are plain JSON so the download thread (download-thread.ts) builds the very same client.
 */
export type S3Config = {
  bucket: string;
  prefix: string;
  client: {
    region: string;
    endpoint?: string;
    forcePathStyle: boolean;
    credentials?: { accessKeyId: string; secretAccessKey: string };
    // Recent SDK versions add CRC32 checksums and aws-chunked bodies to every upload by default, which many
    // S3-compatible servers reject; send them only where the API requires one.
    requestChecksumCalculation: 'WHEN_REQUIRED';
    responseChecksumValidation: 'WHEN_REQUIRED';
  };
};

export function s3ConfigFromEnv(env: Record<string, string | undefined> = process.env): S3Config | null {
  const bucket = env.TRENCHANT_S3_BUCKET?.trim();
  if (!bucket) return null;
  const endpoint = env.TRENCHANT_S3_ENDPOINT?.trim() || undefined;
  const pathStyle = env.TRENCHANT_S3_FORCE_PATH_STYLE?.trim();
  const keyId = env.TRENCHANT_S3_ACCESS_KEY_ID?.trim();
  const secret = env.TRENCHANT_S3_SECRET_ACCESS_KEY?.trim();
  if (Boolean(keyId) !== Boolean(secret)) throw new Error('set both TRENCHANT_S3_ACCESS_KEY_ID and TRENCHANT_S3_SECRET_ACCESS_KEY, or neither (then the AWS SDK finds credentials itself)');
  let prefix = env.TRENCHANT_S3_PREFIX?.trim() ?? '';
  if (prefix && !prefix.endsWith('/')) prefix += '/';
  if (prefix.startsWith('/') || prefix.split('/').some((s, i, all) => (s === '' && i < all.length - 1) || s === '..' || s === '.')) {
    throw new Error(`TRENCHANT_S3_PREFIX ${JSON.stringify(env.TRENCHANT_S3_PREFIX)} must be a relative path like "trenchant/"`);
  }
  return {
    bucket,
    prefix,
    client: {
      region: env.TRENCHANT_S3_REGION?.trim() || env.AWS_REGION?.trim() || 'us-east-1',
      ...(endpoint ? { endpoint } : {}),
      forcePathStyle: pathStyle ? pathStyle === '1' || pathStyle.toLowerCase() === 'true' : Boolean(endpoint),
      ...(keyId && secret ? { credentials: { accessKeyId: keyId, secretAccessKey: secret } } : {}),
      requestChecksumCalculation: 'WHEN_REQUIRED',
      responseChecksumValidation: 'WHEN_REQUIRED',
    },
  };
}

/** "s3://bucket/prefix (endpoint)" without credentials, for logs. */
export function describeS3(config: S3Config): string {
  return `s3://${config.bucket}/${config.prefix}${config.client.endpoint ? ` at ${config.client.endpoint}` : ''}`;
}
