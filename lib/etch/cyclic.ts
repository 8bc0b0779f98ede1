/**
 * Time-multiplexed (cyclic, Bosch-type) etching: each cycle is a passivation step then an etch step.
 * The depth gained in a cycle is the open per-cycle depth times the ARDE factor (and loading) at the depth reached
 * at the start of the cycle:  h_{k+1} = h_k + d(h_k).  With d small this converges to the continuous dh/dt model
 * (explicit Euler with step one cycle), which the tests check.
 *
 * Scallop depth is an ESTIMATE: it assumes each etch step undercuts the sidewall along a circular arc of radius
 * ℓ = lateralToVerticalRatio × (that cycle's depth d), the arcs of successive cycles meeting every d along the wall;
 * the scallop (peak-to-valley, lateral) is the arc's sagitta over the chord d: s = ℓ − √(ℓ² − (d/2)²) for ℓ ≥ d/2,
 * and s = ℓ otherwise. With ℓ = d (isotropic) s ≈ 0.134·d. Real scallops depend on passivation breakthrough and
 * ion angular spread; measure them by SEM.
 */

/** Scallop estimate from one cycle's depth, µm (see module doc for the assumption). */
export function scallopDepthUm(perCycleDepthUm: number, lateralToVerticalRatio = 1): number {
  const d = perCycleDepthUm;
  const l = lateralToVerticalRatio * d;
  if (l < d / 2) return l;
  return l - Math.sqrt(l * l - (d * d) / 4);
}

export type CycleSteps = { etchStepS: number; passivationStepS: number };

export type CyclicRun = {
  /** Depth at the recipe time, µm. */
  depthUm: number;
  /** Whole cycles completed within the recipe time. */
  cyclesInRecipe: number;
  /** Cycles needed to reach the target (the target is crossed during this cycle), or null. */
  cyclesToTarget: number | null;
  timeToTargetMin: number | null;
  /** Depth limit (stop layer, max AR, rate threshold) reached at or before the recipe time. */
  reachedLimit: boolean;
  timeToLimitMin: number | null;
  /** The per-cycle depth fell below the stop threshold before the limit. */
  rateStopped: boolean;
  /** Depth gained per cycle in the first cycle and in the last cycle run within the recipe, µm. */
  firstCycleDepthUm: number;
  lastCycleDepthUm: number;
};

let scratch = new Float64Array(1024);

/**
 * Run cycles until the target and the recipe time are both passed, or the depth limit / stop threshold is hit.
 * @param perCycleDepthUm depth gained in one cycle starting at depth h (µm), non-increasing in h
 * @param minPerCycleUm the etch stops when a cycle would gain less than this
 */
export function runCycles(
  perCycleDepthUm: (depthUm: number) => number,
  steps: CycleSteps,
  opts: { timeMin: number; targetDepthUm: number; limitDepthUm: number; minPerCycleUm: number; maxCycles?: number },
): CyclicRun {
  const cycleMin = (steps.etchStepS + steps.passivationStepS) / 60;
  const passMin = steps.passivationStepS / 60;
  const etchMin = steps.etchStepS / 60;
  const recipeCycles = Math.floor(opts.timeMin / cycleMin + 1e-12);
  const maxCycles = opts.maxCycles ?? 1_000_000;
  // Depth after each cycle, in a module-level buffer reused across calls (a prediction run calls this per opening).
  let depths = scratch;
  depths[0] = 0;
  let count = 1;
  let h = 0;
  let rateStopped = false;
  let limitCycle: number | null = null;
  let targetCycle: number | null = null;
  while (count - 1 < maxCycles) {
    const k = count - 1;
    if (k > recipeCycles && (targetCycle !== null || h >= opts.targetDepthUm)) break;
    const d = perCycleDepthUm(h);
    if (!(d >= opts.minPerCycleUm) || !(d > 0)) {
      rateStopped = true;
      break;
    }
    const next = Math.min(h + d, opts.limitDepthUm);
    if (count === depths.length) {
      const grown = new Float64Array(2 * depths.length);
      grown.set(depths);
      depths = scratch = grown;
    }
    depths[count++] = next;
    if (targetCycle === null && next >= opts.targetDepthUm) targetCycle = k + 1;
    h = next;
    if (next >= opts.limitDepthUm) {
      limitCycle = k + 1;
      break;
    }
  }
  const last = count - 1;
  const at = (i: number) => depths[Math.min(i, last)] ?? 0;
  // Time at which depth H is crossed during cycle c (1-based): linear in time through that cycle's etch step.
  const crossing = (c: number, H: number) => {
    const a = at(c - 1);
    const b = at(c);
    return (c - 1) * cycleMin + passMin + etchMin * (b > a ? (H - a) / (b - a) : 1);
  };
  const remainder = opts.timeMin - recipeCycles * cycleMin;
  let depthUm = at(recipeCycles);
  if (recipeCycles < last) depthUm += Math.min(1, Math.max(0, (remainder - passMin) / etchMin)) * (at(recipeCycles + 1) - at(recipeCycles));
  const timeToTargetMin = targetCycle === null ? null : crossing(targetCycle, opts.targetDepthUm);
  const timeToLimitMin = limitCycle === null ? null : crossing(limitCycle, opts.limitDepthUm);
  return {
    depthUm,
    cyclesInRecipe: Math.min(recipeCycles, last),
    cyclesToTarget: targetCycle,
    timeToTargetMin,
    reachedLimit: timeToLimitMin !== null && timeToLimitMin <= opts.timeMin + 1e-12,
    timeToLimitMin,
    rateStopped: rateStopped && limitCycle === null,
    firstCycleDepthUm: at(1) - at(0),
    lastCycleDepthUm: last >= 1 ? at(Math.min(Math.max(recipeCycles, 1), last)) - at(Math.min(Math.max(recipeCycles, 1), last) - 1) : 0,
  };
}
