export declare const SOURCE_PATHS: string[];
export declare function buildStaleReason(root: string): string | null;
export declare function buildIfStale(
  root: string,
  opts?: { log?: (line: string) => void; stdio?: 'inherit' | 'pipe' },
): { built: boolean; reason: string | null };
