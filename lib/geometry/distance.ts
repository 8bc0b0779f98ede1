/**
 * Exact Euclidean distance transform (Felzenszwalb & Huttenlocher, "Distance Transforms of Sampled Functions",
 * Theory of Computing 8, 2012) and the thickness (local width) transform built on it.
 */

/** Row buffers of the transform, reused across calls (the widths lattice calls it once per feature). */
let scratchF = new Float64Array(0), scratchD = new Float64Array(0), scratchZ = new Float64Array(0), scratchV = new Int32Array(0);
/** Positions 0, 1, 2, … of the uniform transform's samples. */
let scratchPos = new Float64Array(0);

/**
 * 1-D squared distance transform (lower envelope of the parabolas (x − x_q)² + f(q)) of f[0..n), sampled at positions
 * pos[off + q] (increasing; any spacing), written into d. Infinity in f marks samples with no parabola. The uniform
 * transform below passes the positions 0, 1, 2, …, the compressed Manhattan lattice (manhattan-distance.ts) its line
 * coordinates; on integer positions every step is exact, the same numbers as the integer form of the algorithm.
 */
export function edt1d(f: Float64Array, n: number, d: Float64Array, v: Int32Array, z: Float64Array, pos: Float64Array, off: number): void {
  let k = 0;
  v[0] = 0;
  z[0] = -Infinity;
  z[1] = Infinity;
  for (let q = 1; q < n; q++) {
    const fq = f[q] as number;
    if (fq === Infinity) continue;
    if ((f[v[0] as number] as number) === Infinity) {
      v[0] = q;
      continue;
    }
    const xq = pos[off + q] as number;
    let s: number;
    for (;;) {
      const p = v[k] as number, xp = pos[off + p] as number;
      s = (fq + xq * xq - ((f[p] as number) + xp * xp)) / (2 * (xq - xp));
      if (s <= (z[k] as number) && k > 0) k--;
      else break;
    }
    k++;
    v[k] = q;
    z[k] = s;
    z[k + 1] = Infinity;
  }
  if ((f[v[0] as number] as number) === Infinity) {
    d.fill(Infinity, 0, n);
    return;
  }
  k = 0;
  for (let q = 0; q < n; q++) {
    const xq = pos[off + q] as number;
    while ((z[k + 1] as number) < xq) k++;
    const p = v[k] as number;
    const g = xq - (pos[off + p] as number);
    d[q] = g * g + (f[p] as number);
  }
}

/**
 * Squared Euclidean distance (in pixel units) from each pixel centre to the nearest background pixel centre;
 * `inside[q]` nonzero marks foreground. Same as scipy.ndimage.distance_transform_edt(inside)**2.
 * Infinity everywhere when there is no background. `into` (length nx·ny) receives the result when given, so callers
 * measuring many small lattices do not allocate one per call.
 */
export function squaredDistanceTransform(inside: ArrayLike<number>, nx: number, ny: number, into?: Float64Array): Float64Array {
  const out = into ?? new Float64Array(nx * ny);
  const n = Math.max(nx, ny);
  if (scratchF.length < n + 1) {
    scratchF = new Float64Array(2 * n + 1);
    scratchD = new Float64Array(2 * n + 1);
    scratchZ = new Float64Array(2 * n + 2);
    scratchV = new Int32Array(2 * n + 1);
    scratchPos = Float64Array.from({ length: 2 * n + 1 }, (_, i) => i);
  }
  const f = scratchF, d = scratchD, z = scratchZ, v = scratchV;
  // Along columns the input is binary (0 or ∞), where the parabola envelope reduces to the squared distance to
  // the nearest background pixel in the column: two linear scans give the same integers.
  for (let i = 0; i < nx; i++) {
    let last = -1;
    for (let j = 0; j < ny; j++) {
      const q = j * nx + i;
      if (!inside[q]) {
        last = j;
        out[q] = 0;
      } else out[q] = last < 0 ? Infinity : (j - last) * (j - last);
    }
    last = -1;
    for (let j = ny - 1; j >= 0; j--) {
      const q = j * nx + i;
      if (!inside[q]) last = j;
      else if (last >= 0) {
        const e = (last - j) * (last - j);
        if (e < (out[q] as number)) out[q] = e;
      }
    }
  }
  for (let j = 0; j < ny; j++) {
    const line = j * nx;
    let any = false;
    for (let i = 0; i < nx; i++) if ((out[line + i] as number) !== 0) { any = true; break; }
    if (!any) continue; // an all-background row stays 0
    for (let i = 0; i < nx; i++) f[i] = out[line + i] as number;
    edt1d(f, nx, d, v, z, scratchPos, 0);
    for (let i = 0; i < nx; i++) out[line + i] = d[i] as number;
  }
  return out;
}

/**
 * Thickness transform: for each foreground pixel, the diameter (pixel units) of the largest disk that contains
 * it, among the disks centred on foreground pixels with radius = their distance to the background (`d2` is the
 * squared distance). Background pixels get 0. Only disks not contained in a neighbour's disk are painted,
 * largest first, so each pixel is written once by its largest covering disk.
 */
export function thicknessTransform(d2: Float64Array, nx: number, ny: number): Float64Array {
  const t = new Float64Array(nx * ny);
  const centres = maximalDiskCentres(d2, nx, ny);
  centres.sort((a, b) => (d2[b] as number) - (d2[a] as number));
  for (const q of centres) {
    const r2 = d2[q] as number;
    const r = Math.sqrt(r2);
    const ci = q % nx, cj = (q - ci) / nx;
    const w = 2 * r;
    const rr = Math.floor(r);
    for (let dj = -rr; dj <= rr; dj++) {
      const j = cj + dj;
      if (j < 0 || j >= ny) continue;
      const h = Math.floor(Math.sqrt(r2 - dj * dj) + 1e-9);
      const i0 = Math.max(0, ci - h), i1 = Math.min(nx - 1, ci + h);
      const line = j * nx;
      for (let i = i0; i <= i1; i++) if ((t[line + i] as number) === 0 && (d2[line + i] as number) > 0) t[line + i] = w;
    }
  }
  return t;
}

let scratchRoot = new Float64Array(0);
const SCRATCH_MAX = 1 << 18;

/** Foreground pixels whose disk (radius √d2) is not inside an 8-neighbour's disk: the maximal-disk centres. */
export function maximalDiskCentres(d2: Float64Array, nx: number, ny: number): number[] {
  const centres: number[] = [];
  // The widths lattice calls this once per feature: reuse one root buffer instead of allocating 32 KB each time
  // (big maps, e.g. the local-width raster, allocate their own so the module does not keep tens of MB alive).
  let d: Float64Array;
  if (d2.length <= SCRATCH_MAX) {
    if (scratchRoot.length < d2.length) scratchRoot = new Float64Array(Math.min(SCRATCH_MAX, Math.max(d2.length, 2 * scratchRoot.length)));
    d = scratchRoot;
  } else d = new Float64Array(d2.length);
  for (let q = 0; q < d2.length; q++) d[q] = Math.sqrt(d2[q] as number);
  for (let j = 0; j < ny; j++) {
    for (let i = 0; i < nx; i++) {
      const q = j * nx + i;
      const dc = d[q] as number;
      if (dc === 0 || dc === Infinity) continue;
      // Contained in a neighbour's disk when d(n) ≥ d(c) + |n − c| (1 or √2).
      const e1 = dc + 1 - 1e-9, e2 = dc + Math.SQRT2 - 1e-9;
      const l = i > 0, r = i + 1 < nx, b = j > 0, t = j + 1 < ny;
      if ((l && (d[q - 1] as number) >= e1) || (r && (d[q + 1] as number) >= e1) || (b && (d[q - nx] as number) >= e1) || (t && (d[q + nx] as number) >= e1)) continue;
      if ((l && b && (d[q - nx - 1] as number) >= e2) || (r && b && (d[q - nx + 1] as number) >= e2) || (l && t && (d[q + nx - 1] as number) >= e2) || (r && t && (d[q + nx + 1] as number) >= e2)) continue;
      centres.push(q);
    }
  }
  return centres;
}
