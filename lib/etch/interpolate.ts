/**
 * Monotone cubic Hermite interpolation (Fritsch & Carlson, SIAM J. Numer. Anal. 17, 238, 1980) on a uniform grid.
 * Used for the shipped transmission tables: x = ln(aspect ratio), y = ln K.
 */
export type UniformTable = { x0: number; dx: number; y: ArrayLike<number>; slopes: Float64Array };

/** Precompute Fritsch–Carlson slopes for a uniform grid starting at x0 with spacing dx. */
export function monotoneTable(x0: number, dx: number, y: ArrayLike<number>): UniformTable {
  const n = y.length;
  const d = new Float64Array(n - 1);
  for (let i = 0; i < n - 1; i++) d[i] = ((y[i + 1] ?? 0) - (y[i] ?? 0)) / dx;
  const m = new Float64Array(n);
  m[0] = d[0] ?? 0;
  m[n - 1] = d[n - 2] ?? 0;
  for (let i = 1; i < n - 1; i++) {
    const a = d[i - 1] ?? 0;
    const b = d[i] ?? 0;
    // Harmonic mean of the neighbouring secants (Fritsch–Butland form): keeps the interpolant monotone.
    m[i] = a * b <= 0 ? 0 : (2 * a * b) / (a + b);
  }
  return { x0, dx, y, slopes: m };
}

/** Evaluate the table at x (must lie within the grid; callers handle the ends). */
export function evalTable(t: UniformTable, x: number): number {
  const n = t.y.length;
  let i = Math.floor((x - t.x0) / t.dx);
  if (i < 0) i = 0;
  if (i > n - 2) i = n - 2;
  const s = (x - (t.x0 + i * t.dx)) / t.dx;
  const y0 = t.y[i] ?? 0;
  const y1 = t.y[i + 1] ?? 0;
  const m0 = (t.slopes[i] ?? 0) * t.dx;
  const m1 = (t.slopes[i + 1] ?? 0) * t.dx;
  const s2 = s * s;
  const s3 = s2 * s;
  return (2 * s3 - 3 * s2 + 1) * y0 + (s3 - 2 * s2 + s) * m0 + (-2 * s3 + 3 * s2) * y1 + (s3 - s2) * m1;
}
