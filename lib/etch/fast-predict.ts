/**
 * Fast per-feature prediction for many openings under one process model: tables built once per (model, kind)
 * replace the per-feature adaptive quadrature of predictFeature (which stays the reference implementation).
 *
 * Derivation (continuous mode). The rate law in predict.ts is R(h) = R_open·Λ·f(h/w): Λ = loadingFactor(density,
 * exposed fraction) is constant for a feature and f = ARDE factor of its kind depends on the aspect ratio u = h/w
 * only (transmission K(u), Coburn–Winters with S, ion terms with σ and the supply ratio). With u = h/w,
 *   du/dt = (R_open·Λ/w)·f(u)   ⇒   t(u) = (w/(R_open·Λ))·τ(u),   τ(u) = ∫₀ᵘ du′/f(u′),
 * one universal increasing function per (model, kind). So
 *   depth at recipe time T:  h = w·τ⁻¹(R_open·Λ·T/w)      time to depth H:  t = w·τ(H/w)/(R_open·Λ).
 * The depth limit (stop layer, max aspect ratio, rate threshold) is reached when t(limit) ≤ T; the rate-threshold
 * depth solves Λ·f(u) = stopRateFraction (bisection on the exact f, memoised per Λ); over-etch uses the exact rate
 * R_open·Λ·f(h_stop/w) at the stop layer. Everything after the kinetics (over-etch, mask, stop reason, warnings)
 * is predict.ts's assemblePrediction, shared with predictFeature, so the semantics are the same.
 *
 * Table: L(x) = ln τ(eˣ) on a uniform grid in x = ln u from u₀ = 1e-9 to the model's maxAspectRatio (step ≤ 1/128),
 * node values by adaptive Gauss–Kronrod of 1/f between nodes (relative tolerance 1e-12), node slopes exact:
 * dL/dx = u/(f(u)·τ(u)). Between nodes, cubic Hermite with these exact slopes; its error is (dx⁴/384)·max|L⁗| on
 * smooth pieces, largest mid-interval, so the build measures it at every interval midpoint against the quadrature
 * and reports the maximum as `maxRelTauError` (relative error of τ, hence of time to target). Depth error: since
 * τ(u) ≤ u/f(u), dL/dx ≥ 1 and |δu/u| ≤ |δL| = maxRelTauError. Below u₀, τ(u) = u·τ(u₀)/u₀ (f = 1 − O(u), error
 * ≤ ~u₀). Measured max on the test models ~1e-10 (tests/etch/fast-predict.test.ts compares with predictFeature at
 * 1e-6). If f reaches 0 before maxAspectRatio (never with the shipped forms) the table stops there and features
 * that need the rest fall back to predictFeature.
 *
 * Cyclic mode: u_{n+1} = u_n + (d₀Λ/w)·f(u_n) is not scale-free, so cycles are stepped as in predictFeature, with
 * f from a table of f in ln u (step 1/1024, monotone cubic; exact f below u = 1e-7): measured max relative error
 * of f is reported as `maxRelArdeError`; a depth after N cycles inherits about that relative error.
 */
import { runCycles, scallopDepthUm } from './cyclic';
import { adaptiveIntegral } from './depth-integrator';
import { evalTable, monotoneTable, type UniformTable } from './interpolate';
import { loadingFactor } from './loading';
import { assemblePrediction, checkInput, predictFeature, type FeatureInput, type FeaturePrediction, type KineticOutcome } from './predict';
import type { ProcessModel } from './process-model';
import { createArdeEvaluators, type ArdeEvaluator } from './rate';
import type { FeatureKind } from './transmission';

const U0 = 1e-9;
const TAU_STEPS_PER_UNIT_LN = 128;
const F_U0 = 1e-7;
const F_STEPS_PER_UNIT_LN = 1024;

type TauTable = {
  x0: number;
  dx: number;
  n: number;
  /** ln τ at the nodes. */
  L: Float64Array;
  /** dL/dx at the nodes (exact). */
  dL: Float64Array;
  /** τ(u₀)/u₀: τ is linear below u₀. */
  g0: number;
  /** Largest u the table covers (maxAspectRatio unless f reached 0 first). */
  uTop: number;
  maxRelError: number;
};

function hermite(t: TauTable, i: number, s: number): number {
  const y0 = t.L[i] as number;
  const y1 = t.L[i + 1] as number;
  const m0 = (t.dL[i] as number) * t.dx;
  const m1 = (t.dL[i + 1] as number) * t.dx;
  const s2 = s * s;
  const s3 = s2 * s;
  return (2 * s3 - 3 * s2 + 1) * y0 + (s3 - 2 * s2 + s) * m0 + (-2 * s3 + 3 * s2) * y1 + (s3 - s2) * m1;
}

function buildTau(f: ArdeEvaluator, uMax: number): TauTable | null {
  const x0 = Math.log(U0);
  const x1 = Math.log(uMax);
  if (!(x1 > x0 + 1)) return null;
  const n = Math.ceil((x1 - x0) * TAU_STEPS_PER_UNIT_LN) + 1;
  const dx = (x1 - x0) / (n - 1);
  const uAt = (i: number) => (i === n - 1 ? uMax : Math.exp(x0 + i * dx));
  const inv = (u: number) => 1 / f(u);
  const L = new Float64Array(n);
  const dL = new Float64Array(n);
  let tau = adaptiveIntegral(inv, 0, U0, U0 * 1e-12, 12);
  let count = 0;
  let maxRelError = 0;
  for (let i = 0; i < n; i++) {
    const u = uAt(i);
    if (i > 0) {
      const a = uAt(i - 1);
      const piece = adaptiveIntegral(inv, a, u, (u - a) * inv(a) * 1e-12, 12);
      // Mid-interval check of the Hermite interpolant against the quadrature (where its error peaks).
      const mid = Math.exp(x0 + (i - 0.5) * dx);
      const tauMid = tau + adaptiveIntegral(inv, a, mid, (mid - a) * inv(a) * 1e-12, 12);
      tau += piece;
      const fu = f(u);
      if (!(fu > 0) || !Number.isFinite(tau)) break;
      L[i] = Math.log(tau);
      dL[i] = u / (fu * tau);
      const approx = Math.exp(hermite({ x0, dx, n, L, dL, g0: 0, uTop: 0, maxRelError: 0 }, i - 1, 0.5));
      maxRelError = Math.max(maxRelError, Math.abs(approx / tauMid - 1));
    } else {
      L[0] = Math.log(tau);
      dL[0] = U0 / (f(U0) * tau);
    }
    count = i + 1;
  }
  if (count < 2) return null;
  return { x0, dx, n: count, L, dL, g0: Math.exp(L[0] as number) / U0, uTop: count === n ? uMax : uAt(count - 1), maxRelError };
}

/** τ(u) from the table; u ≤ table.uTop. */
function tauOf(t: TauTable, u: number): number {
  if (u <= U0) return u * t.g0;
  const x = Math.log(u);
  let i = Math.floor((x - t.x0) / t.dx);
  if (i > t.n - 2) i = t.n - 2;
  if (i < 0) i = 0;
  return Math.exp(hermite(t, i, (x - (t.x0 + i * t.dx)) / t.dx));
}

/** u with τ(u) = s, for s ≤ τ(uTop): binary search on the nodes, then safeguarded Newton on the Hermite cubic. */
function tauInverse(t: TauTable, s: number): number {
  if (s <= t.g0 * U0) return s / t.g0;
  const y = Math.log(s);
  let lo = 0;
  let hi = t.n - 1;
  if (y >= (t.L[hi] as number)) return Math.exp(t.x0 + hi * t.dx);
  while (hi - lo > 1) {
    const mid = (lo + hi) >> 1;
    if ((t.L[mid] as number) <= y) lo = mid;
    else hi = mid;
  }
  const i = lo;
  const y0 = t.L[i] as number;
  const y1 = t.L[i + 1] as number;
  const m0 = (t.dL[i] as number) * t.dx;
  const m1 = (t.dL[i + 1] as number) * t.dx;
  let a = 0;
  let b = 1;
  let s0 = y1 > y0 ? (y - y0) / (y1 - y0) : 0;
  for (let it = 0; it < 60; it++) {
    const s2 = s0 * s0;
    const p = (2 * s2 * s0 - 3 * s2 + 1) * y0 + (s2 * s0 - 2 * s2 + s0) * m0 + (-2 * s2 * s0 + 3 * s2) * y1 + (s2 * s0 - s2) * m1 - y;
    if (p > 0) b = s0;
    else a = s0;
    const dp = (6 * s2 - 6 * s0) * y0 + (3 * s2 - 4 * s0 + 1) * m0 + (-6 * s2 + 6 * s0) * y1 + (3 * s2 - 2 * s0) * m1;
    let next = s0 - p / dp;
    if (!(next > a && next < b)) next = 0.5 * (a + b);
    if (Math.abs(next - s0) <= 1e-15) {
      s0 = next;
      break;
    }
    s0 = next;
  }
  return Math.exp(t.x0 + (i + s0) * t.dx);
}

type FTable = { table: UniformTable; x1: number; maxRelError: number };

function buildF(f: ArdeEvaluator, uMax: number): FTable {
  const x0 = Math.log(F_U0);
  const x1 = Math.log(Math.max(uMax * 1.001, F_U0 * 10));
  const n = Math.ceil((x1 - x0) * F_STEPS_PER_UNIT_LN) + 1;
  const dx = (x1 - x0) / (n - 1);
  const y = new Float64Array(n);
  for (let i = 0; i < n; i++) y[i] = f(Math.exp(x0 + i * dx));
  const table = monotoneTable(x0, dx, y);
  let maxRelError = 0;
  for (let i = 0; i < n - 1; i++) {
    const x = x0 + (i + 0.5) * dx;
    const exact = f(Math.exp(x));
    if (exact > 1e-300) maxRelError = Math.max(maxRelError, Math.abs(evalTable(table, x) / exact - 1));
  }
  return { table, x1, maxRelError };
}

type KindPredictor = {
  arde: ArdeEvaluator;
  tau: TauTable | null;
  fTable: () => FTable;
  /** Rate-threshold aspect ratio per loading factor Λ: -1 = never (use max AR), else u* (0 = starts below). */
  thresholdU: Map<number, number>;
};

/** A feature predictor bound to one model; the table accuracy actually measured at build time is attached. */
export type FeaturePredictor = ((input: FeatureInput) => FeaturePrediction) & {
  /** Largest measured relative error of the τ table (continuous mode) over the kinds built so far. */
  readonly maxRelTauError: () => number;
  /** Largest measured relative error of the tabulated ARDE factor (cyclic mode) over the kinds built so far. */
  readonly maxRelArdeError: () => number;
};

/**
 * Build a predictor that gives predictFeature's results (to a relative ~1e-9, see module doc) at a small fixed
 * cost per feature. Tables are built lazily per kind on first use (a few ms each). Returned predictions with no
 * warnings share one frozen empty array: never mutate `warnings`.
 * @example const predict = createFeaturePredictor(model); predict({ widthUm: 5, kind: 'trench', effectiveDensity: 0.3 }).depthUm
 */
export function createFeaturePredictor(model: ProcessModel): FeaturePredictor {
  const maxAR = model.etch.maxAspectRatio;
  const evaluators = createArdeEvaluators(model, maxAR);
  const kinds: Partial<Record<FeatureKind, KindPredictor>> = {};
  const kindOf = (kind: FeatureKind): KindPredictor => {
    let k = kinds[kind];
    if (!k) {
      const arde = evaluators[kind];
      let ft: FTable | undefined;
      k = {
        arde,
        tau: model.mode === 'cyclic' ? null : buildTau(arde, maxAR),
        fTable: () => (ft ??= buildF(arde, maxAR)),
        thresholdU: new Map(),
      };
      kinds[kind] = k;
    }
    return k;
  };
  const R = model.openRateUmPerMin;
  const T = model.etch.timeMin;
  const target = model.etch.targetDepthUm;
  const threshold = model.etch.stopRateFraction * R;
  const stopDepth = model.stopLayer?.depthUm ?? Infinity;
  const cyclicSteps = model.mode === 'cyclic' ? model.cyclic : undefined;

  // Same test as rateThresholdDepthUm, in aspect ratio (the rate law is R(h) = loadedOpenRate·f(h/w)).
  const thresholdAspectRatio = (k: KindPredictor, loadedOpenRate: number, lf: number): number => {
    let u = k.thresholdU.get(lf);
    if (u !== undefined) return u;
    if (!(threshold > 0) || loadedOpenRate * k.arde(maxAR) >= threshold) u = -1;
    else if (loadedOpenRate * k.arde(0) < threshold) u = 0;
    else {
      let lo = 0;
      let hi = maxAR;
      for (let i = 0; i < 200 && hi - lo > 1e-12 * maxAR; i++) {
        const mid = 0.5 * (lo + hi);
        if (loadedOpenRate * k.arde(mid) >= threshold) lo = mid;
        else hi = mid;
      }
      u = lo;
    }
    if (k.thresholdU.size > 100_000) k.thresholdU.clear();
    k.thresholdU.set(lf, u);
    return u;
  };

  const predict = (input: FeatureInput): FeaturePrediction => {
    checkInput(input);
    const k = kindOf(input.kind);
    const w = input.widthUm;
    const lf = loadingFactor(model.loading, input.effectiveDensity ?? 0, input.exposedFraction ?? 0);
    const loadedOpenRate = R * lf;
    const arDepth = maxAR * w;
    const uStar = thresholdAspectRatio(k, loadedOpenRate, lf);
    const rateDepth = uStar < 0 ? arDepth : uStar * w;
    const limit = Math.min(rateDepth, arDepth, stopDepth);
    const limitIsStopLayer = stopDepth <= Math.min(rateDepth, arDepth);
    const constants = { arde: k.arde, lf, loadedOpenRate, arDepth, rateDepth, stopDepth, limitIsStopLayer };
    let outcome: KineticOutcome;
    if (cyclicSteps) {
      const cycleMin = (cyclicSteps.etchStepS + cyclicSteps.passivationStepS) / 60;
      const { table, x1 } = k.fTable();
      const perCycleOpen = loadedOpenRate * cycleMin;
      const arde = k.arde;
      const run = runCycles(
        (h) => {
          const u = h / w;
          return perCycleOpen * (u < F_U0 ? arde(u) : evalTable(table, Math.min(Math.log(u), x1)));
        },
        cyclicSteps,
        { timeMin: T, targetDepthUm: target, limitDepthUm: limit, minPerCycleUm: threshold * cycleMin },
      );
      outcome = {
        depthUm: run.depthUm,
        timeToTargetMin: run.timeToTargetMin,
        reachedLimit: run.reachedLimit || run.rateStopped,
        timeToLimitMin: run.rateStopped ? 0 : run.timeToLimitMin,
        cyclic: {
          cyclesInRecipe: run.cyclesInRecipe,
          cyclesToTarget: run.cyclesToTarget,
          firstCycleDepthUm: run.firstCycleDepthUm,
          lastCycleDepthUm: run.lastCycleDepthUm,
          scallopTopUm: scallopDepthUm(run.firstCycleDepthUm, cyclicSteps.lateralToVerticalRatio),
          scallopBottomUm: scallopDepthUm(run.lastCycleDepthUm, cyclicSteps.lateralToVerticalRatio),
        },
      };
    } else {
      const tau = k.tau;
      const uLimit = limit / w;
      // uLimit may exceed maxAspectRatio by an ulp (maxAR·w/w); only a truncated table sends features to the reference.
      if (!tau || (tau.uTop < maxAR && uLimit > tau.uTop && limit > 0)) return predictFeature(model, input, { arde: evaluators });
      if (limit <= 0) {
        outcome = { depthUm: 0, reachedLimit: true, timeToLimitMin: 0, timeToTargetMin: target <= limit ? 0 : null, cyclic: null };
      } else if (!(loadedOpenRate > 0)) {
        // No etching at all (linear loading at its floor): the reference finds infinite times, reported as null.
        outcome = { depthUm: 0, reachedLimit: false, timeToLimitMin: null, timeToTargetMin: null, cyclic: null };
      } else {
        const perMin = loadedOpenRate / w; // dτ/dt
        const timeToLimitMin = tauOf(tau, Math.min(uLimit, tau.uTop)) / perMin;
        const reachedLimit = timeToLimitMin <= T;
        const depthUm = reachedLimit ? limit : Math.min(limit, w * tauInverse(tau, perMin * T));
        const timeToTargetMin = target <= limit ? tauOf(tau, target / w) / perMin : null;
        outcome = { depthUm, reachedLimit, timeToLimitMin, timeToTargetMin, cyclic: null };
      }
    }
    return assemblePrediction(model, input, constants, outcome, true);
  };
  const maxOver = (pick: (k: KindPredictor) => number) => () => Math.max(0, ...Object.values(kinds).map((k) => pick(k as KindPredictor)));
  return Object.assign(predict, {
    maxRelTauError: maxOver((k) => k.tau?.maxRelError ?? 0),
    maxRelArdeError: maxOver((k) => (cyclicSteps ? k.fTable().maxRelError : 0)),
  });
}
