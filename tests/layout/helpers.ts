import { LayoutReadError } from '@/lib/layout/errors';
import { readLayoutBytes, type ReadOptions } from '@/lib/layout/read-bytes';
import type { FlatLayout } from '@/lib/layout/types';

/** Read and expect a LayoutReadError; fails the test if the read succeeds or throws anything else. */
export async function readError(bytes: Uint8Array, opts?: ReadOptions): Promise<LayoutReadError> {
  try {
    await readLayoutBytes(bytes, opts);
  } catch (err) {
    if (err instanceof LayoutReadError) return err;
    throw new Error(`expected LayoutReadError, got ${String(err)}`);
  }
  throw new Error('expected LayoutReadError, but the read succeeded');
}

/** Offsets of every record in a GDSII byte array: [offset, length, type]. */
export function records(bytes: Uint8Array): [number, number, number][] {
  const out: [number, number, number][] = [];
  let p = 0;
  while (p + 4 <= bytes.length) {
    const len = ((bytes[p] as number) << 8) | (bytes[p + 1] as number);
    out.push([p, len, bytes[p + 2] as number]);
    if (len < 4) break;
    p += len;
  }
  return out;
}

export const text = (s: string) => new TextEncoder().encode(s);

/** Sum of shoelace areas of all polygons of a set (dbu²). */
export function summedArea(layout: FlatLayout, layer: number, datatype = 0): number {
  const s = layout.layers.find((l) => l.layer === layer && l.datatype === datatype);
  if (!s) return 0;
  let a = 0;
  for (let p = 0; p < s.count; p++) {
    const f = s.offsets[p] as number;
    const t = s.offsets[p + 1] as number;
    for (let k = f; k < t; k++) {
      const j = k + 1 < t ? k + 1 : f;
      a += (s.coords[2 * k] as number) * (s.coords[2 * j + 1] as number) - (s.coords[2 * j] as number) * (s.coords[2 * k + 1] as number);
    }
  }
  return a / 2;
}
