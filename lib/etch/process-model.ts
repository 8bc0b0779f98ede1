/**
 * The process model document: versioned JSON, units in field names, validated by zod.
 * A model with only the required fields means the neutral-transport-limited case:
 *   rate = openRateUmPerMin × Γ_bottom/Γ_top(K(h/w), S) × loading factor.
 * Optional blocks add ion-enhanced etching (`ion`), time-multiplexed cycles (`cyclic`), mask erosion (`mask`), a
 * stop layer with over-etch (`stopLayer`) and the calibrated ranges (`calibration`).
 */
import { z } from 'zod';

const fraction01 = (what: string) => z.number({ error: `${what} must be a number` }).min(0, `${what} must be ≥ 0`).max(1, `${what} must be ≤ 1`);
const positive = (what: string, unit: string) =>
  z.number({ error: `${what} must be a number (${unit})` }).refine((v) => Number.isFinite(v) && v > 0, `${what} must be > 0 ${unit}`);
const nonNegative = (what: string, unit: string) =>
  z.number({ error: `${what} must be a number (${unit})` }).refine((v) => Number.isFinite(v) && v >= 0, `${what} must be ≥ 0 ${unit}`);
const range = (what: string) =>
  z
    .tuple([z.number(), z.number()], { error: `${what} must be [min, max]` })
    .refine(([a, b]) => Number.isFinite(a) && Number.isFinite(b) && a <= b, `${what} must be [min, max] with min ≤ max`);

export const ionTermsSchema = z.strictObject({
  /** σ of one projected ion angle component, degrees (see ion-flux.ts for the convention). */
  angularSigmaDeg: positive('ion.angularSigmaDeg', 'degrees').refine((v) => v <= 45, 'ion.angularSigmaDeg must be ≤ 45 degrees'),
  /** r = k_n·Γ_n / (k_i·Γ_i) on the open field: 0 = neutral-limited, large = ion-limited. */
  neutralToIonSupplyRatio: nonNegative('ion.neutralToIonSupplyRatio', '(dimensionless)'),
  /** Where the ion flux is evaluated: bottom centre (closed form, default) or averaged over the bottom. */
  fluxSite: z.enum(['centre', 'bottom-mean']).default('centre'),
});

export const cyclicStepsSchema = z.strictObject({
  etchStepS: positive('cyclic.etchStepS', 's'),
  passivationStepS: nonNegative('cyclic.passivationStepS', 's'),
  /** Lateral reach of one etch step's isotropic undercut relative to its vertical depth (1 = isotropic). */
  lateralToVerticalRatio: positive('cyclic.lateralToVerticalRatio', '(dimensionless)').default(1),
});

export const maskSchema = z.strictObject({
  thicknessUm: positive('mask.thicknessUm', 'µm'),
  /** etched-material rate / mask rate on the open field. */
  selectivity: positive('mask.selectivity', '(dimensionless)'),
  material: z.string().max(100).optional(),
});

export const stopLayerSchema = z.strictObject({
  /** Depth of the top of the stop layer below the surface = thickness of the etched film. */
  depthUm: positive('stopLayer.depthUm', 'µm'),
  /** etched-material rate / stop-layer rate. */
  selectivity: positive('stopLayer.selectivity', '(dimensionless)'),
  thicknessUm: positive('stopLayer.thicknessUm', 'µm').optional(),
  material: z.string().max(100).optional(),
});

export const calibrationRecordSchema = z.strictObject({
  date: z.iso.date({ error: 'calibration.date must be a date YYYY-MM-DD' }),
  source: z.string().max(500).optional(),
  widthUm: range('calibration.widthUm'),
  aspectRatio: range('calibration.aspectRatio'),
  density: range('calibration.density'),
  kinds: z.array(z.enum(['trench', 'hole'])).min(1).optional(),
  pointCount: z.number().int().positive().optional(),
  rSquared: z.number().max(1).optional(),
  rmsResidualUm: z.number().min(0).optional(),
  parameters: z.record(z.string(), z.strictObject({ value: z.number(), standardError: z.number().nullable() })).optional(),
  /** s = √(SSR/(n − p)) of the fit, µm: the scatter of single measurements about the model. */
  residualStandardErrorUm: z.number().min(0).optional(),
  /**
   * Covariance of the fitted parameters (s²(JᵀJ)⁻¹), in the order of `parameters` here; propagated to predicted
   * depth as the depth uncertainty (lib/etch/uncertainty.ts). Names: openRateUmPerMin, reactionProbability,
   * loadingCoefficient.
   */
  covariance: z
    .strictObject({
      parameters: z.array(z.enum(['openRateUmPerMin', 'reactionProbability', 'loadingCoefficient'])).min(1).max(3),
      matrix: z.array(z.array(z.number())),
    })
    .refine((c) => c.matrix.length === c.parameters.length && c.matrix.every((r) => r.length === c.parameters.length), 'calibration.covariance.matrix must be square, one row per parameter')
    .optional(),
});

export const processModelSchema = z
  .strictObject({
    /** Document format version; this code reads version 1. */
    schemaVersion: z.literal(1, { error: 'schemaVersion must be 1' }).default(1),
    name: z.string().min(1).max(200).optional(),
    /** The model's own revision label, recorded with every report. */
    version: z.string().min(1).max(100).optional(),
    description: z.string().max(2000).optional(),
    openRateUmPerMin: positive('openRateUmPerMin', 'µm/min'),
    reactionProbability: z
      .number({ error: 'reactionProbability must be a number' })
      .refine((v) => v > 0 && v <= 1, 'reactionProbability (S) must be in (0, 1]'),
    loading: z.strictObject({
      /** κ, local microloading coefficient; 0 = no loading. */
      coefficient: nonNegative('loading.coefficient', '(dimensionless)'),
      /** Kernel length of the effective density, µm (used by the geometry engine). */
      lengthUm: positive('loading.lengthUm', 'µm'),
      /** Φ, global (Mogab) coefficient per unit exposed wafer fraction; 0 = none. */
      globalCoefficient: nonNegative('loading.globalCoefficient', '(dimensionless)').default(0),
      form: z.enum(['reciprocal', 'linear']).default('reciprocal'),
      kernel: z.enum(['gaussian', 'exponential']).default('gaussian'),
    }, { error: 'loading must be an object { coefficient, lengthUm }' }),
    etch: z.strictObject({
      timeMin: positive('etch.timeMin', 'min'),
      targetDepthUm: positive('etch.targetDepthUm', 'µm'),
      toleranceUm: nonNegative('etch.toleranceUm', 'µm'),
      /** Deepest aspect ratio this process reaches; features stop there. */
      maxAspectRatio: positive('etch.maxAspectRatio', '(dimensionless)'),
      /** Etch stops where the local rate falls below this fraction of openRateUmPerMin. */
      stopRateFraction: fraction01('etch.stopRateFraction').refine((v) => v < 1, 'etch.stopRateFraction must be < 1').default(0.01),
    }, { error: 'etch must be an object { timeMin, targetDepthUm, toleranceUm, maxAspectRatio }' }),
    mode: z.enum(['continuous', 'cyclic'], { error: "mode must be 'continuous' or 'cyclic'" }),
    ion: ionTermsSchema.optional(),
    cyclic: cyclicStepsSchema.optional(),
    mask: maskSchema.optional(),
    stopLayer: stopLayerSchema.optional(),
    calibration: calibrationRecordSchema.optional(),
  }, { error: 'a process model must be a JSON object' })
  .superRefine((m, ctx) => {
    if (m.etch.toleranceUm >= m.etch.targetDepthUm) {
      ctx.addIssue({ code: 'custom', path: ['etch', 'toleranceUm'], message: 'etch.toleranceUm must be smaller than etch.targetDepthUm' });
    }
    if (m.mode === 'cyclic' && !m.cyclic) {
      ctx.addIssue({ code: 'custom', path: ['cyclic'], message: "mode 'cyclic' needs a cyclic block (etchStepS, passivationStepS)" });
    }
    if (m.mode === 'continuous' && m.cyclic) {
      ctx.addIssue({ code: 'custom', path: ['cyclic'], message: "a cyclic block is given but mode is 'continuous'" });
    }
    if (m.stopLayer && m.stopLayer.depthUm < m.etch.targetDepthUm) {
      ctx.addIssue({ code: 'custom', path: ['stopLayer', 'depthUm'], message: 'stopLayer.depthUm is above etch.targetDepthUm: the target can never be reached' });
    }
    if (m.loading.form === 'linear' && m.loading.coefficient + m.loading.globalCoefficient >= 1) {
      ctx.addIssue({ code: 'custom', path: ['loading', 'coefficient'], message: "with loading.form 'linear', coefficient + globalCoefficient must be < 1 (rate would reach 0)" });
    }
  });

export type ProcessModel = z.infer<typeof processModelSchema>;
/** The document as written (defaults not yet applied). */
export type ProcessModelInput = z.input<typeof processModelSchema>;

export type ModelIssue = { path: string; message: string };

/**
 * Validate a parsed JSON value as a process model. Issues carry a dotted path ("etch.toleranceUm", "(root)").
 * @example parseProcessModel({}) // { ok: false, issues: [{ path: 'openRateUmPerMin', message: … }, …] }
 */
export function parseProcessModel(input: unknown): { ok: true; model: ProcessModel } | { ok: false; issues: ModelIssue[] } {
  const r = processModelSchema.safeParse(input);
  if (r.success) return { ok: true, model: r.data };
  const issues: ModelIssue[] = [];
  for (const i of r.error.issues) {
    const base = i.path.map(String);
    if (i.code === 'unrecognized_keys') {
      for (const key of i.keys) issues.push({ path: [...base, key].join('.'), message: 'unknown field (check spelling and units suffix)' });
    } else {
      issues.push({ path: base.length ? base.join('.') : '(root)', message: i.message });
    }
  }
  return { ok: false, issues };
}

/** One-line summary of model issues, for command-line errors. */
export function formatModelIssues(issues: ModelIssue[]): string {
  return issues.map((i) => `${i.path}: ${i.message}`).join('; ');
}
