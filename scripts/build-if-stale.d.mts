export declare const SOURCE_PATHS: string[];
export declare function newestSourceMtime(root: string): number;
export declare function buildStaleReason(root: string): string | null;
export declare function buildIfStale(
  root: string,
  opts?: { log?: (line: string) => void; stdio?: 'inherit' | 'pipe'; rememberFailure?: boolean },
): { built: boolean; reason: string | null };
export declare function buildEnv(base?: Record<string, string | undefined>): { env: NodeJS.ProcessEnv; cleanup: () => void };
