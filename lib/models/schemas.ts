/**
 * Request bodies of the model and rule-set routes (zod), shared by route handlers, the OpenAPI document and the
 * browser forms. Pure module.
 */
import { z } from 'zod';

export const FIT_PARAMETERS = ['openRateUmPerMin', 'reactionProbability', 'loadingCoefficient'] as const;

/** What the calibration page stores with a draft so its plots can be shown again (the fit itself is recomputable). */
export const storedCalibrationSchema = z.strictObject({
  /** File name of the measurements as uploaded (display only). */
  fileName: z.string().max(300),
  fit: z.array(z.enum(FIT_PARAMETERS)).min(1).max(3),
  rows: z
    .array(
      z.strictObject({
        line: z.number().int().positive(),
        widthUm: z.number().positive(),
        kind: z.enum(['trench', 'hole']),
        density: z.number().min(0).max(1),
        timeMin: z.number().positive(),
        depthUm: z.number().min(0),
      }),
    )
    .min(1)
    .max(10_000, 'at most 10,000 measurement rows'),
  rSquared: z.number().nullable(),
  rmsResidualUm: z.number().min(0),
  residualStandardErrorUm: z.number().min(0).nullable(),
  degreesOfFreedom: z.number().int(),
  parameters: z.record(z.string(), z.strictObject({ value: z.number(), standardError: z.number().nullable(), atBound: z.boolean() })),
  warnings: z.array(z.string().max(500)).max(50),
});
export type StoredCalibration = z.infer<typeof storedCalibrationSchema>;

const documentField = z.record(z.string(), z.unknown(), { error: 'document must be a process model JSON object.' });

export const createModelBody = z.strictObject({
  name: z.string().trim().min(1, 'Give the model a name.').max(200, 'Keep the name under 200 characters.'),
  /** Short stable key, unique in the team (letters, digits, dashes); derived from the name when omitted. */
  key: z
    .string()
    .trim()
    .regex(/^[a-z0-9][a-z0-9-]{0,79}$/, 'Use lower-case letters, digits and dashes (up to 80).')
    .optional(),
  description: z.string().max(2000).default(''),
  featureKind: z.enum(['trench', 'hole'], { error: "featureKind must be 'trench' or 'hole'." }).default('trench'),
  /** Start from a version of any model in the team, or from a built-in sample (GET /api/v1/models); or give a document. */
  fromVersionId: z.string().min(1).max(100).optional(),
  fromSample: z.string().min(1).max(100).optional(),
  document: documentField.optional(),
});
export type CreateModelBody = z.infer<typeof createModelBody>;

export const updateDraftBody = z.strictObject({
  document: documentField.optional(),
  note: z.string().max(2000, 'Keep the note under 2,000 characters.').optional(),
  /** The calibration shown with the draft; null removes it. */
  calibration: storedCalibrationSchema.nullable().optional(),
});
export type UpdateDraftBody = z.infer<typeof updateDraftBody>;

export const widthRulesQuery = z.object({
  kind: z.enum(['trench', 'hole'], { error: "kind must be 'trench' or 'hole'." }).default('trench'),
  targetDepthUm: z.coerce.number({ error: 'targetDepthUm must be a number (µm).' }).positive('targetDepthUm must be > 0 µm.').max(100_000).optional(),
  toleranceUm: z.coerce.number().min(0).optional(),
  density: z.coerce.number().min(0, 'density must be in [0, 1].').max(1, 'density must be in [0, 1].').optional(),
  format: z.enum(['json', 'csv']).default('json'),
});

/** `?widthsUm=2,5,10`: 1–20 opening widths in µm. */
const widthList = z
  .string()
  .trim()
  .transform((v, ctx) => {
    const parts = v.split(',').map((x) => x.trim());
    const nums = parts.map(Number);
    const bad = parts.findIndex((x, i) => x === '' || !Number.isFinite(nums[i]) || (nums[i] as number) <= 0 || (nums[i] as number) > 10_000);
    if (bad >= 0) ctx.addIssue({ code: 'custom', message: `widthsUm: item ${bad + 1} ('${parts[bad]}') must be a width in µm, > 0 and ≤ 10,000.` });
    else if (nums.length > 20) ctx.addIssue({ code: 'custom', message: 'widthsUm: give at most 20 widths.' });
    return nums;
  });

export const densityLimitsQuery = widthRulesQuery.omit({ density: true }).extend({ widthsUm: widthList.optional() });
