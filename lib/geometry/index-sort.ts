/**
 * Stable sort of ids[0..n) by key[id] (ascending, or descending), ties kept in their order: what
 * `ids.sort((a, b) => key[a] - key[b] || a - b)` gives for ids listed in increasing order, without a comparator
 * call per comparison (the widths passes sort a few dozen ids per opening, hundreds of thousands of times).
 * Keys must not be NaN.
 */
let tmpS = new Int32Array(0);

export function stableSortBy(ids: Int32Array, n: number, key: Float64Array, descending: boolean): void {
  if (n <= 24) {
    insertion(ids, 0, n, key, descending);
    return;
  }
  // Runs of 16 by insertion, then bottom-up merges between ids and a scratch buffer.
  for (let s = 0; s < n; s += 16) insertion(ids, s, Math.min(n, s + 16), key, descending);
  if (tmpS.length < n) tmpS = new Int32Array(Math.max(n, 2 * tmpS.length));
  let src: Int32Array = ids, dst: Int32Array = tmpS;
  for (let w = 16; w < n; w *= 2) {
    for (let lo = 0; lo < n; lo += 2 * w) {
      const mid = Math.min(n, lo + w), hi = Math.min(n, lo + 2 * w);
      let a = lo, b = mid, o = lo;
      while (a < mid && b < hi) {
        const ka = key[src[a] as number] as number, kb = key[src[b] as number] as number;
        // The right one goes first only when it strictly precedes: equal keys keep their order.
        if (descending ? kb > ka : kb < ka) dst[o++] = src[b++] as number;
        else dst[o++] = src[a++] as number;
      }
      while (a < mid) dst[o++] = src[a++] as number;
      while (b < hi) dst[o++] = src[b++] as number;
    }
    const t = src;
    src = dst;
    dst = t;
  }
  if (src !== ids) ids.set(src.subarray(0, n));
}

function insertion(ids: Int32Array, s: number, e: number, key: Float64Array, descending: boolean): void {
  for (let k = s + 1; k < e; k++) {
    const v = ids[k] as number, kv = key[v] as number;
    let q = k - 1;
    while (q >= s && (descending ? (key[ids[q] as number] as number) < kv : (key[ids[q] as number] as number) > kv)) {
      ids[q + 1] = ids[q] as number;
      q--;
    }
    ids[q + 1] = v;
  }
}
