/**
 * Numerical solution of the integral equation for the transmission probability of a long 2-D slot (a trench
 * much longer than it is wide), walls diffuse and non-sticking, entry flux cosine-law (domain.md 3.2).
 *
 * Frame: width w = 1, walls at x = 0 and x = 1, depth z from the top opening (z = 0) to the bottom (z = h = AR).
 * ν(z) = arrival density on one wall (per unit depth, per molecule entering); by symmetry both walls are equal.
 *   ν(z) = g(z) + ∫₀ʰ k(z − z′) ν(z′) dz′,   g(z) = ½[1 − z/√(1+z²)],   k(d) = ½(1+d²)^(−3/2)
 *   K = F(h) + 2∫₀ʰ ν(z) g(h − z) dz,         F(h) = √(1+h²) − h  (opening → bottom, direct)
 * Solved by Nyström discretisation with composite Gauss–Legendre panels and a dense LU solve: O(n³), so this runs
 * once in tests/etch/tools/generate-slot-table.ts and in a spot-check test, never at prediction time
 * (predictions use the shipped table in slot-transmission-table.ts).
 */

/** Gauss–Legendre nodes and weights on [−1, 1] (Newton on P_n; accurate to ~1e-15 for n ≤ 64). */
export function gaussLegendre(n: number): { nodes: Float64Array; weights: Float64Array } {
  const nodes = new Float64Array(n);
  const weights = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    let x = Math.cos((Math.PI * (i + 0.75)) / (n + 0.5));
    let dp = 1;
    for (let iter = 0; iter < 100; iter++) {
      let p0 = 1;
      let p1 = x;
      for (let k = 2; k <= n; k++) {
        const p2 = ((2 * k - 1) * x * p1 - (k - 1) * p0) / k;
        p0 = p1;
        p1 = p2;
      }
      const pn = n === 1 ? x : p1;
      const pnm1 = n === 1 ? 1 : p0;
      dp = (n * (x * pn - pnm1)) / (x * x - 1);
      const dx = pn / dp;
      x -= dx;
      if (Math.abs(dx) < 1e-16) break;
    }
    nodes[i] = x;
    weights[i] = 2 / ((1 - x * x) * dp * dp);
  }
  return { nodes, weights };
}

/** Solve A x = b in place (A row-major n×n, partial pivoting). Returns x (overwrites b). */
function solveDense(a: Float64Array, b: Float64Array, n: number): Float64Array {
  for (let c = 0; c < n; c++) {
    let piv = c;
    let best = Math.abs(a[c * n + c] ?? 0);
    for (let r = c + 1; r < n; r++) {
      const v = Math.abs(a[r * n + c] ?? 0);
      if (v > best) {
        best = v;
        piv = r;
      }
    }
    if (piv !== c) {
      for (let k = 0; k < n; k++) {
        const t = a[c * n + k] ?? 0;
        a[c * n + k] = a[piv * n + k] ?? 0;
        a[piv * n + k] = t;
      }
      const t = b[c] ?? 0;
      b[c] = b[piv] ?? 0;
      b[piv] = t;
    }
    const d = a[c * n + c] ?? 1;
    for (let r = c + 1; r < n; r++) {
      const f = (a[r * n + c] ?? 0) / d;
      if (f === 0) continue;
      const ro = r * n;
      const co = c * n;
      for (let k = c; k < n; k++) a[ro + k] = (a[ro + k] ?? 0) - f * (a[co + k] ?? 0);
      b[r] = (b[r] ?? 0) - f * (b[c] ?? 0);
    }
  }
  for (let r = n - 1; r >= 0; r--) {
    let s = b[r] ?? 0;
    for (let k = r + 1; k < n; k++) s -= (a[r * n + k] ?? 0) * (b[k] ?? 0);
    b[r] = s / (a[r * n + r] ?? 1);
  }
  return b;
}

/**
 * Transmission probability of a long slot of aspect ratio `aspectRatio` = depth/width, by Nyström.
 * `panelLength` (in widths) and `pointsPerPanel` set the resolution; the defaults give ~1e-7 relative accuracy
 * (checked by halving the panel length in the generator script).
 */
export function solveSlotTransmission(aspectRatio: number, opts: { panelLength?: number; pointsPerPanel?: number } = {}): number {
  const h = aspectRatio;
  if (!(h > 0)) return 1;
  const panelLength = opts.panelLength ?? 1;
  const m = opts.pointsPerPanel ?? 10;
  const panels = Math.max(1, Math.ceil(h / panelLength));
  const len = h / panels;
  const gl = gaussLegendre(m);
  const n = panels * m;
  const z = new Float64Array(n);
  const w = new Float64Array(n);
  for (let p = 0; p < panels; p++) {
    for (let i = 0; i < m; i++) {
      z[p * m + i] = (p + 0.5) * len + 0.5 * len * (gl.nodes[i] ?? 0);
      w[p * m + i] = 0.5 * len * (gl.weights[i] ?? 0);
    }
  }
  const g = (s: number) => 0.5 * (1 - s / Math.sqrt(1 + s * s));
  const a = new Float64Array(n * n);
  const b = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const zi = z[i] ?? 0;
    b[i] = g(zi);
    for (let j = 0; j < n; j++) {
      const d = zi - (z[j] ?? 0);
      const k = 0.5 * Math.pow(1 + d * d, -1.5);
      a[i * n + j] = (i === j ? 1 : 0) - k * (w[j] ?? 0);
    }
  }
  const nu = solveDense(a, b, n);
  let wallToBottom = 0;
  for (let j = 0; j < n; j++) wallToBottom += (w[j] ?? 0) * (nu[j] ?? 0) * g(h - (z[j] ?? 0));
  return Math.sqrt(1 + h * h) - h + 2 * wallToBottom;
}
