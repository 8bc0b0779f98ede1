export declare const FAKE_S3_CREDENTIALS: { accessKeyId: string; secretAccessKey: string };
export type FakeS3 = { endpoint: string; bucket: string; env: Record<string, string>; stop: () => Promise<void> };
export declare function startFakeS3(options: { directory: string; bucket?: string; port?: number; log?: boolean }): Promise<FakeS3>;
