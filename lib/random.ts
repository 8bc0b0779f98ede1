/**
 * Seeded pseudo-random numbers for demo data, test data and benchmarks, so every run sees the same numbers.
 * Not for anything secret (tokens use node:crypto).
 */

/** mulberry32: a 32-bit state PRNG giving uniform numbers in [0, 1); integer-only, so other languages can mirror it. */
export function mulberry32(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/** Standard normal deviates by Box–Muller from a uniform source. */
export function gaussian(rand: () => number): () => number {
  return () => Math.sqrt(-2 * Math.log(1 - rand())) * Math.cos(2 * Math.PI * rand());
}
