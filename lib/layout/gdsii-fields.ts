/** Reading GDSII record payloads (big-endian integers, NUL-padded ASCII) and the parser's record errors. */
import { LayoutReadError } from './errors';
import { recordName } from './gdsii-records';

export type GdsiiRecordErrorCode = 'bad-record' | 'bad-structure' | 'unknown-record' | 'missing-xy' | 'duplicate-cell';

/** The `k`-th signed 16-bit integer of the payload starting at `q`. */
export function i16(b: Uint8Array, q: number, k: number): number {
  return (((b[q + 2 * k] as number) << 24) | ((b[q + 2 * k + 1] as number) << 16)) >> 16;
}

/** The `k`-th signed 32-bit integer of the payload starting at `q`. */
export function i32(b: Uint8Array, q: number, k: number): number {
  const i = q + 4 * k;
  return ((b[i] as number) << 24) | ((b[i + 1] as number) << 16) | ((b[i + 2] as number) << 8) | (b[i + 3] as number);
}

/** Bytes as hex pairs, for messages about what a file starts with. */
export function hex(b: Uint8Array, from: number, n: number): string {
  return Array.from(b.subarray(from, from + n), (v) => v.toString(16).padStart(2, '0')).join(' ');
}

/** An ASCII payload without its trailing NUL padding. */
export function ascii(b: Uint8Array, p: number, len: number): string {
  let end = p + len;
  while (end > p && b[end - 1] === 0) end--;
  let s = '';
  for (let i = p; i < end; i++) s += String.fromCharCode(b[i] as number);
  return s;
}

export function fail(code: GdsiiRecordErrorCode, msg: string, at: number): never {
  throw new LayoutReadError(code, msg, { offset: at });
}

/** A record of `type` must have data type `want` and at least `minLen` payload bytes. */
export function expectRecord(type: number, dt: number, want: number, len: number, minLen: number, at: number): void {
  if (dt !== want || len < minLen) {
    fail('bad-record', `${recordName(type)} record at byte ${at} has data type ${dt} and ${len} payload bytes, expected data type ${want} with at least ${minLen}`, at);
  }
}
