/**
 * Signed area of one ring in flat [x0, y0, x1, y1, …] form; the ring is implicitly closed.
 * Positive when counter-clockwise in a y-up frame. Units: input units².
 * @example ringArea(Float64Array.of(0,0, 1,0, 1,1, 0,1)) // 1
 */
export function ringArea(xy: ArrayLike<number>, start = 0, end = xy.length): number {
  let s = 0;
  const n = end - start;
  if (n < 6) return 0;
  // Shoelace about the first point keeps the products small (exact for dbu below ~2^26).
  const ox = xy[start] as number, oy = xy[start + 1] as number;
  for (let k = start + 2; k + 3 < end; k += 2) {
    s += ((xy[k] as number) - ox) * ((xy[k + 3] as number) - oy) - ((xy[k + 2] as number) - ox) * ((xy[k + 1] as number) - oy);
  }
  return s / 2;
}

/** Perimeter of one closed ring (input units). */
export function ringPerimeter(xy: ArrayLike<number>, start = 0, end = xy.length): number {
  let s = 0;
  for (let k = start; k < end; k += 2) {
    const n = k + 2 < end ? k + 2 : start;
    s += Math.hypot((xy[n] as number) - (xy[k] as number), (xy[n + 1] as number) - (xy[k + 1] as number));
  }
  return s;
}

/** First moments (∫x dA, ∫y dA) of a ring, signed like ringArea. */
export function ringMoments(xy: ArrayLike<number>, start = 0, end = xy.length): [number, number] {
  let mx = 0, my = 0;
  const ox = xy[start] as number, oy = xy[start + 1] as number;
  let a2 = 0;
  for (let k = start; k < end; k += 2) {
    const n = k + 2 < end ? k + 2 : start;
    const x0 = (xy[k] as number) - ox, y0 = (xy[k + 1] as number) - oy, x1 = (xy[n] as number) - ox, y1 = (xy[n + 1] as number) - oy;
    const c = x0 * y1 - x1 * y0;
    a2 += c;
    mx += (x0 + x1) * c;
    my += (y0 + y1) * c;
  }
  // Shift the moments back from the local origin: ∫x dA = ∫(x−ox) dA + ox·A.
  return [mx / 6 + ox * (a2 / 2), my / 6 + oy * (a2 / 2)];
}
