/**
 * The shape cache of featureWidths (widths.ts): congruent copies under translation (arrays of the same cell) are
 * measured once. Two features are the same shape when their rings, moved to the bbox corner and each started at its
 * lowest-then-leftmost point (the first such point), are the same sequences of numbers as multisets — exactly when
 * their `shapeKey` strings are equal, so a feature hits the cache exactly when it would with string keys.
 *
 * Keys are a 30-bit hash of that canonical form, with linear probing over the Map's integer keys and the stored form
 * compared number by number, so a hash collision never returns another shape's widths. Building and hashing a
 * ~130-character string per feature cost more than this on layouts where few shapes repeat.
 */
import type { Box } from './types';
import type { WidthResult } from './widths';

export interface WidthCacheEntry {
  /** Canonical form: ring count, then per ring its point count and its points (x, y relative to the bbox corner). A
   * plain array: small typed arrays are allocated off the JS heap, which made storing cost more than measuring. */
  shape: number[];
  result: WidthResult;
}

/** Shapes already measured (see module doc); `size` is the number of shapes stored. */
export type WidthCache = Map<number, WidthCacheEntry>;

let canonS = new Float64Array(256);
let canonLength = 0;
const bits = new Float64Array(1), bitsU = new Uint32Array(bits.buffer);

function ensure(n: number): void {
  if (canonS.length < n) canonS = new Float64Array(Math.max(n, 2 * canonS.length));
}

/** Start of ring [s, e): its first lowest-then-leftmost point (as shapeKey). */
function ringStart(coords: ArrayLike<number>, s: number, e: number): number {
  let m = s;
  for (let k = s + 1; k < e; k++) {
    const y = coords[2 * k + 1] as number, ym = coords[2 * m + 1] as number;
    if (y < ym || (y === ym && (coords[2 * k] as number) < (coords[2 * m] as number))) m = k;
  }
  return m;
}

/** Writes ring [s, e) rotated to its start, relative to (x0, y0), at canonS[o..); returns the next offset. */
function writeRing(coords: ArrayLike<number>, s: number, e: number, x0: number, y0: number, o: number): number {
  const m = ringStart(coords, s, e), n = e - s;
  canonS[o++] = n;
  for (let q = 0; q < n; q++) {
    const k = m + q < e ? m + q : m + q - n;
    // + 0 turns −0 into 0 (the string key does not tell them apart; the hash must not either).
    canonS[o++] = (coords[2 * k] as number) - x0 + 0;
    canonS[o++] = (coords[2 * k + 1] as number) - y0 + 0;
  }
  return o;
}

/** Total order on two written rings (at a, b in `buf`): point count, then their numbers. */
function compareRings(buf: Float64Array, a: number, b: number): number {
  const na = buf[a] as number, nb = buf[b] as number;
  if (na !== nb) return na - nb;
  for (let q = 1; q <= 2 * na; q++) {
    const u = buf[a + q] as number, v = buf[b + q] as number;
    if (u !== v) return u < v ? -1 : 1;
  }
  return 0;
}

/** Canonical form of the rings into module scratch (canonS[0..canonLength)); returns its hash (0 ≤ h < 2^30). */
function canonicalise(coords: ArrayLike<number>, rings: [number, number][], bbox: Box): number {
  let total = 0;
  for (let ri = 0; ri < rings.length; ri++) total += rings[ri]![1] - rings[ri]![0];
  ensure(1 + rings.length + 2 * total);
  canonS[0] = rings.length;
  if (rings.length === 1) canonLength = writeRing(coords, rings[0]![0], rings[0]![1], bbox[0], bbox[1], 1);
  else {
    // Several rings (rare): written in any order, then copied out in the canonical ring order.
    const tmp = new Float64Array(rings.length + 2 * total);
    const saved = canonS;
    canonS = tmp;
    const offs: number[] = [];
    let o = 0;
    for (let ri = 0; ri < rings.length; ri++) {
      const s = rings[ri]![0], e = rings[ri]![1];
      offs.push(o);
      o = writeRing(coords, s, e, bbox[0], bbox[1], o);
    }
    canonS = saved;
    offs.sort((a, b) => compareRings(tmp, a, b));
    let w = 1;
    for (const a of offs) {
      const len = 1 + 2 * (tmp[a] as number);
      canonS.set(tmp.subarray(a, a + len), w);
      w += len;
    }
    canonLength = w;
  }
  // FNV-1a style mix of the 32-bit halves of every number.
  let h = 0x811c9dc5 | 0;
  for (let k = 0; k < canonLength; k++) {
    bits[0] = canonS[k] as number;
    h = Math.imul(h ^ (bitsU[0] as number), 0x01000193);
    h = Math.imul(h ^ (bitsU[1] as number), 0x01000193);
  }
  h ^= h >>> 15;
  h = Math.imul(h, 0x2c1b3c6d);
  h ^= h >>> 12;
  return h & 0x3fffffff;
}

/** Key of the free slot found by the last lookup (where `store` puts the shape). */
let freeKey = 0;

/** The cached widths of this shape, or undefined (then `store` may follow, before any other lookup). */
export function lookup(cache: WidthCache, coords: ArrayLike<number>, rings: [number, number][], bbox: Box): WidthResult | undefined {
  let key = canonicalise(coords, rings, bbox);
  for (;;) {
    const e = cache.get(key);
    if (!e) break;
    if (sameShape(e.shape)) return e.result;
    key = (key + 1) & 0x3fffffff;
  }
  freeKey = key;
  return undefined;
}

function sameShape(shape: number[]): boolean {
  if (shape.length !== canonLength) return false;
  for (let k = 0; k < canonLength; k++) if (shape[k] !== canonS[k]) return false;
  return true;
}

/** Stores the result for the shape of the last (missed) lookup. */
export function store(cache: WidthCache, result: WidthResult): void {
  const shape: number[] = [];
  for (let k = 0; k < canonLength; k++) shape.push(canonS[k] as number);
  cache.set(freeKey, { shape, result });
}
