/**
 * Depth versus time for one feature. The local rate depends only on the depth reached (through h/w), so
 *   t(h) = ∫₀ʰ dh′ / R(h′)
 * is computed directly by adaptive Gauss–Kronrod (7,15) quadrature with error control, giving time-to-depth
 * exactly (to the tolerance) and depth-at-time by a safeguarded Newton iteration on t(h) = T.
 * Preconditions: R(h) ≥ 0 and non-increasing in h (true for every ARDE and loading form here), units µm and min.
 */

export type RateFunction = (depthUm: number) => number;

// QUADPACK qk15 nodes/weights (Kronrod 15 with embedded Gauss 7).
const XGK = [0.991455371120812639, 0.949107912342758525, 0.864864423359769073, 0.741531185599394440, 0.586087235467691130, 0.405845151377397167, 0.207784955007898468, 0];
const WGK = [0.022935322010529225, 0.063092092629978553, 0.104790010322250184, 0.140653259715525919, 0.169004726639267903, 0.190350578064785410, 0.204432940075298892, 0.209482141084727828];
const WG = [0.129484966168869693, 0.279705391489276668, 0.381830050505118945, 0.417959183673469388];

function kronrod(f: (x: number) => number, a: number, b: number): { value: number; error: number } {
  const c = 0.5 * (a + b);
  const hl = 0.5 * (b - a);
  const fc = f(c);
  let k = fc * (WGK[7] ?? 0);
  let g = fc * (WG[3] ?? 0);
  for (let j = 0; j < 7; j++) {
    const dx = hl * (XGK[j] ?? 0);
    const s = f(c - dx) + f(c + dx);
    k += (WGK[j] ?? 0) * s;
    if (j % 2 === 1) g += (WG[(j - 1) / 2] ?? 0) * s;
  }
  return { value: k * hl, error: Math.abs((k - g) * hl) };
}

/**
 * ∫_a^b f by adaptive (7,15) Gauss–Kronrod, bisecting until each piece's error estimate is below its share of
 * `absTol`; at most `maxDepth` levels of bisection.
 */
export function adaptiveIntegral(f: (x: number) => number, a: number, b: number, absTol: number, maxDepth = 40): number {
  if (b === a) return 0;
  const rec = (lo: number, hi: number, tol: number, level: number, whole: { value: number; error: number }): number => {
    if (whole.error <= tol || level >= maxDepth || !Number.isFinite(whole.value)) return whole.value;
    const mid = 0.5 * (lo + hi);
    return rec(lo, mid, tol / 2, level + 1, kronrod(f, lo, mid)) + rec(mid, hi, tol / 2, level + 1, kronrod(f, mid, hi));
  };
  return rec(a, b, absTol, 0, kronrod(f, a, b));
}

/**
 * Time to etch from depth a to depth b, min: ∫_a^b dh/R(h). Infinity when the rate reaches 0 on the way.
 * `relTol` is relative to a first estimate of the result.
 */
export function timeBetweenDepthsMin(rate: RateFunction, aUm: number, bUm: number, relTol = 1e-10): number {
  if (bUm <= aUm) return 0;
  if (!(rate(bUm) > 0)) return Infinity;
  const f = (h: number) => 1 / rate(h);
  const rough = kronrod(f, aUm, bUm).value;
  return adaptiveIntegral(f, aUm, bUm, Math.abs(rough) * relTol);
}

/** Time to reach `depthUm` from the surface, min (Infinity if the rate reaches 0 first). */
export function timeToDepthMin(rate: RateFunction, depthUm: number, relTol = 1e-10): number {
  return timeBetweenDepthsMin(rate, 0, depthUm, relTol);
}

/**
 * Depth where the rate first falls to `thresholdUmPerMin`, searched in [0, maxDepthUm] by bisection (rate is
 * non-increasing). Returns maxDepthUm when the rate stays above the threshold, 0 when it starts below.
 */
export function rateThresholdDepthUm(rate: RateFunction, thresholdUmPerMin: number, maxDepthUm: number): number {
  if (!(thresholdUmPerMin > 0) || rate(maxDepthUm) >= thresholdUmPerMin) return maxDepthUm;
  if (rate(0) < thresholdUmPerMin) return 0;
  let lo = 0;
  let hi = maxDepthUm;
  for (let i = 0; i < 200 && hi - lo > 1e-12 * maxDepthUm; i++) {
    const mid = 0.5 * (lo + hi);
    if (rate(mid) >= thresholdUmPerMin) lo = mid;
    else hi = mid;
  }
  return lo;
}

export type DepthAtTime = {
  /** Depth reached at the given time, µm (≤ limitDepthUm). */
  depthUm: number;
  /** True when the limit depth was reached at or before the given time. */
  reachedLimit: boolean;
  /** Time to reach the limit depth, min (may exceed the given time; Infinity if never; NaN if not requested). */
  timeToLimitMin: number;
};

/**
 * Depth reached after `timeMin` minutes, capped at `limitDepthUm`.
 * Since R(h) ≤ R(0), the constant-rate depth T·R(0) bounds the answer from above; Newton on t(h) = T then converges
 * monotonically from above (t is convex: dt/dh = 1/R is non-decreasing), guarded by a bisection bracket.
 * `opts.limitTime = false` skips computing the time to the limit when it is not reached (saves a long quadrature).
 * @example depthAtTime(() => 2, 3, 100) // { depthUm: 6, reachedLimit: false, timeToLimitMin: 50 }
 */
export function depthAtTime(rate: RateFunction, timeMin: number, limitDepthUm: number, relTol = 1e-10, opts: { limitTime?: boolean } = {}): DepthAtTime {
  const wantLimitTime = opts.limitTime !== false;
  const r0 = rate(0);
  if (limitDepthUm <= 0) return { depthUm: 0, reachedLimit: true, timeToLimitMin: 0 };
  if (!(r0 > 0) || timeMin <= 0) {
    return { depthUm: 0, reachedLimit: false, timeToLimitMin: wantLimitTime ? timeToDepthMin(rate, limitDepthUm, relTol) : NaN };
  }
  const h0 = Math.min(limitDepthUm, timeMin * r0);
  const t0 = timeToDepthMin(rate, h0, relTol);
  if (h0 === limitDepthUm && t0 <= timeMin) return { depthUm: limitDepthUm, reachedLimit: true, timeToLimitMin: t0 };
  const timeToLimitMin = h0 === limitDepthUm ? t0 : wantLimitTime ? t0 + timeBetweenDepthsMin(rate, h0, limitDepthUm, relTol) : NaN;
  let lo = 0;
  let tLo = 0;
  let hi = h0;
  let tHi = t0;
  let h = h0;
  let t = t0;
  for (let iter = 0; iter < 100; iter++) {
    if (Math.abs(t - timeMin) <= relTol * timeMin || hi - lo <= 1e-13 * Math.max(1, limitDepthUm)) break;
    if (t > timeMin) {
      hi = h;
      tHi = t;
    } else {
      lo = h;
      tLo = t;
    }
    let next = h - (t - timeMin) * rate(h);
    if (!(next > lo && next < hi)) next = Number.isFinite(tHi) ? lo + ((timeMin - tLo) / (tHi - tLo)) * (hi - lo) : 0.5 * (lo + hi);
    if (!(next > lo && next < hi)) next = 0.5 * (lo + hi);
    t = next > h ? t + timeBetweenDepthsMin(rate, h, next, relTol) : t - timeBetweenDepthsMin(rate, next, h, relTol);
    h = next;
  }
  return { depthUm: h, reachedLimit: false, timeToLimitMin };
}
