/** Bytes for the storage tests: deterministic contents and their digests. */
import { createHash } from 'node:crypto';

/** Deterministic bytes that differ at every offset pattern (so a shifted range cannot pass): a 32-bit LCG's top bytes. */
export function pattern(n: number, seed = 1): Buffer {
  const b = Buffer.alloc(n);
  let s = seed >>> 0;
  for (let i = 0; i < n; i++) {
    s = (Math.imul(s, 1664525) + 1013904223) >>> 0;
    b[i] = s >>> 24;
  }
  return b;
}

export const sha = (b: Uint8Array): string => createHash('sha256').update(b).digest('hex');
