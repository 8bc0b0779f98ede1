/**
 * Analysis settings: everything besides the layout and the process model that decides a result. Stored as JSON with
 * each analysis so the result can be reproduced (`analysisSettingsSchema.parse(storedJson)` gives the same run).
 *
 * Units: all lengths in micrometres (µm); densities are open-area fractions 0..1; aspect ratio = depth / width.
 * `null` in a limit means "take it from the process model" (maxAspectRatio, targetDepthUm, toleranceUm,
 * kernel length) or "not checked" (the density limits, stop budget, minimum width) — see `resolveLimits`.
 *
 * Pure module: zod only, no Node or DB imports (runs in the worker, the CLI, tests and the browser form).
 */
import { z } from 'zod';

export const SETTINGS_VERSION = 1;

const um = (what: string) => z.number({ error: `${what} must be a number (µm)` }).finite().positive(`${what} must be > 0 µm`);
const fraction = (what: string) =>
  z.number({ error: `${what} must be a number` }).finite().min(0, `${what} must be ≥ 0`).max(1, `${what} must be ≤ 1`);

export const layerRefSchema = z.object({
  layer: z.number().int().min(0).max(65535),
  datatype: z.number().int().min(0).max(65535),
});
export type LayerRef = z.infer<typeof layerRefSchema>;

export const densityWindowSchema = z
  .object({ windowUm: um('windowUm'), stepUm: um('stepUm') })
  .refine((w) => w.stepUm <= w.windowUm, { message: 'stepUm must not exceed windowUm (windows would leave gaps)', path: ['stepUm'] });
export type DensityWindowSetting = z.infer<typeof densityWindowSchema>;

/**
 * Common window/step choices seen in open rule documents (e.g. 700 µm stepped by 70 µm, and a smaller window
 * for local checks). These are common choices, not any foundry's rule: use the rule manual's values.
 */
export const DEFAULT_DENSITY_WINDOWS: DensityWindowSetting[] = [
  { windowUm: 100, stepUm: 50 },
  { windowUm: 700, stepUm: 70 },
];

export const FLAG_SEVERITIES = ['error', 'warning', 'info'] as const;
export type Severity = (typeof FLAG_SEVERITIES)[number];

export const FLAG_KINDS = [
  'under-target-depth',
  'over-etch-budget',
  'aspect-ratio-above-limit',
  'width-below-minimum',
  'window-density-below-min',
  'window-density-above-max',
  'density-gradient-above-limit',
  'outside-calibrated-range',
] as const;
export type FlagKind = (typeof FLAG_KINDS)[number];

export const analysisSettingsSchema = z
  .object({
    version: z.literal(SETTINGS_VERSION).default(SETTINGS_VERSION),
    /** Layers whose shapes define the etched openings (their union is analysed as one mask). */
    etchLayers: z.array(layerRefSchema).min(1, 'choose at least one etch layer'),
    /** 'clear': drawn shapes are the openings; 'dark': everything inside the die extent except the shapes is open. */
    polarity: z.enum(['clear', 'dark']).default('clear'),
    densityWindows: z.array(densityWindowSchema).min(1, 'give at least one density window').max(8).default(DEFAULT_DENSITY_WINDOWS),
    /** Window origin: the lower-left corner of the die extent (layout bounding box) unless given, in µm. */
    windowOriginUm: z.tuple([z.number().finite(), z.number().finite()]).nullable().default(null),
    /** 'full': only windows fully inside the die; 'clipped': edge windows clipped to the die, divided by the clipped area. */
    windowEdge: z.enum(['full', 'clipped']).default('clipped'),
    kernel: z
      .object({
        /** Kernel shape; null = the process model's (its loading was calibrated with that shape). */
        kind: z.enum(['gaussian', 'exponential']).nullable().default(null),
        /** Kernel length L in µm; null = the process model's loading length. */
        lengthUm: um('kernel.lengthUm').nullable().default(null),
        /** What lies outside the die: 'empty' (nothing open) or 'mirror' (the die pattern reflected). */
        outside: z.enum(['empty', 'mirror']).default('empty'),
      })
      .prefault({}),
    pixel: z
      .object({
        /** Pixel size in µm, or 'auto' (see choosePixelUm). */
        sizeUm: z.union([z.literal('auto'), um('pixel.sizeUm')]).default('auto'),
        /** Upper bound on nx·ny for every map. 4 M float32 pixels = 16 MB per map. */
        maxPixels: z.number().int().min(1_000).max(100_000_000).default(4_000_000),
      })
      .prefault({}),
    limits: z
      .object({
        minDensity: fraction('limits.minDensity').nullable().default(null),
        maxDensity: fraction('limits.maxDensity').nullable().default(null),
        /** Largest allowed density difference between neighbouring windows (one step apart), as a fraction. */
        maxGradient: fraction('limits.maxGradient').nullable().default(null),
        maxAspectRatio: z.number().finite().positive().nullable().default(null),
        targetDepthUm: um('limits.targetDepthUm').nullable().default(null),
        toleranceUm: z.number().finite().min(0).nullable().default(null),
        /** Depth etched into the stop layer (the model's over-etch) allowed before it is flagged; null = not checked. */
        stopOverEtchBudgetUm: z.number().finite().min(0).nullable().default(null),
        /** Rule minimum opening width in µm; null = not checked. */
        minWidthUm: um('limits.minWidthUm').nullable().default(null),
      })
      .prefault({})
      .refine((l) => l.minDensity === null || l.maxDensity === null || l.minDensity <= l.maxDensity, {
        message: 'minDensity must not exceed maxDensity',
        path: ['minDensity'],
      }),
    /** Per-kind severity overrides (e.g. a density limit that is only a recommendation → 'warning'). */
    severities: z.partialRecord(z.enum(FLAG_KINDS), z.enum(FLAG_SEVERITIES)).default({}),
    /** At most this many flags are listed (worst first); counts in the summary always cover all of them. */
    maxListedFlags: z.number().int().min(1).max(1_000_000).default(10_000),
  })
  .strict();

export type AnalysisSettings = z.infer<typeof analysisSettingsSchema>;
/** What a caller may write: defaults filled in by the schema. */
export type AnalysisSettingsInput = z.input<typeof analysisSettingsSchema>;

export interface FieldIssue {
  /** Dotted path, e.g. "densityWindows.1.stepUm"; "" for the whole object. */
  path: string;
  message: string;
}

export type ParseSettingsResult = { ok: true; settings: AnalysisSettings } | { ok: false; issues: FieldIssue[] };

/** Validate settings from JSON (a form, the API, the CLI, a stored analysis); every problem is reported by field. */
export function parseAnalysisSettings(input: unknown): ParseSettingsResult {
  const r = analysisSettingsSchema.safeParse(input);
  if (r.success) return { ok: true, settings: r.data };
  return {
    ok: false,
    issues: r.error.issues.map((i) => ({ path: i.path.map(String).join('.'), message: i.message })),
  };
}

/** 1-2-5 series: the smallest "nice" value ≥ x (so common window and step sizes are whole multiples of it). */
export function niceCeil(x: number): number {
  if (!(x > 0) || !Number.isFinite(x)) throw new RangeError(`niceCeil needs a positive finite number, got ${x}`);
  const e = Math.floor(Math.log10(x));
  for (const m of [1, 2, 2.5, 5, 10]) {
    const v = m * 10 ** e;
    if (v >= x * (1 - 1e-12)) return Number(v.toPrecision(12));
  }
  return 10 ** (e + 1);
}

/** Greatest common divisor of lengths on a 1e-6 µm quantum. */
export function lengthGcdUm(lengths: number[]): number {
  let g = 0;
  for (const v of lengths) {
    let a = Math.round(v * 1e6);
    let b = g;
    while (b) [a, b] = [b, a % b];
    g = a;
  }
  return g / 1e6;
}

/**
 * Automatic pixel size in µm. Target: fine enough to resolve the smallest density window (window / 50), coarse
 * enough that the die's grid stays within `maxPixels`. When the target is at most g, the gcd of all window sizes
 * and steps, the pixel is the smallest divisor g/k of g not below the target, so every window edge falls on a
 * pixel edge and window sums are exact. Otherwise it is the target rounded up to the 1-2-2.5-5 series.
 * @example choosePixelUm(2_000, 1_000, [{ windowUm: 100, stepUm: 50 }, { windowUm: 700, stepUm: 70 }], 4_000_000) // 2
 */
export function choosePixelUm(dieWidthUm: number, dieHeightUm: number, windows: DensityWindowSetting[], maxPixels: number): number {
  const fits = (p: number) => Math.ceil(dieWidthUm / p - 1e-9) * Math.ceil(dieHeightUm / p - 1e-9) <= maxPixels;
  const smallest = Math.min(...windows.map((w) => w.windowUm));
  const target = Math.max(Math.sqrt((Math.max(dieWidthUm, 1e-9) * Math.max(dieHeightUm, 1e-9)) / maxPixels), smallest / 50);
  const g = lengthGcdUm(windows.flatMap((w) => [w.windowUm, w.stepUm]));
  if (g > 0 && target <= g) {
    for (let k = Math.max(1, Math.floor(g / target + 1e-9)); k >= 1; k--) {
      const p = g / k;
      if (fits(p)) return p;
    }
  }
  let p = niceCeil(target);
  while (!fits(p)) p = niceCeil(p * 1.0001);
  return p;
}

/** Limits after filling model defaults: what the flags were actually checked against (stored with the result). */
export interface ResolvedLimits {
  minDensity: number | null;
  maxDensity: number | null;
  maxGradient: number | null;
  maxAspectRatio: number;
  targetDepthUm: number;
  toleranceUm: number;
  stopOverEtchBudgetUm: number | null;
  minWidthUm: number | null;
}

/** The part of a process model the limits fall back on (structural, so this module need not import lib/etch). */
export interface ModelEtchDefaults {
  etch: { targetDepthUm: number; toleranceUm: number; maxAspectRatio: number };
  loading: { lengthUm: number; kernel?: 'gaussian' | 'exponential' };
}

export function resolveLimits(settings: AnalysisSettings, model: ModelEtchDefaults): ResolvedLimits {
  const l = settings.limits;
  return {
    minDensity: l.minDensity,
    maxDensity: l.maxDensity,
    maxGradient: l.maxGradient,
    maxAspectRatio: l.maxAspectRatio ?? model.etch.maxAspectRatio,
    targetDepthUm: l.targetDepthUm ?? model.etch.targetDepthUm,
    toleranceUm: l.toleranceUm ?? model.etch.toleranceUm,
    stopOverEtchBudgetUm: l.stopOverEtchBudgetUm,
    minWidthUm: l.minWidthUm,
  };
}

export interface ResolvedKernel {
  kind: 'gaussian' | 'exponential';
  lengthUm: number;
  outside: 'empty' | 'mirror';
  /** True when kind and length both came from the model. */
  fromModel: boolean;
}

export function resolveKernel(settings: AnalysisSettings, model: ModelEtchDefaults): ResolvedKernel {
  const k = settings.kernel;
  return {
    kind: k.kind ?? model.loading.kernel ?? 'gaussian',
    lengthUm: k.lengthUm ?? model.loading.lengthUm,
    outside: k.outside,
    fromModel: k.kind === null && k.lengthUm === null,
  };
}

/**
 * Memory an analysis needs per map pixel, in bytes: coverage, the exact raster accumulator, the padded FFT buffers
 * of the effective density, local width and the painted maps. Measured 26–68 bytes per pixel on 1–16 M pixel
 * grids (peak RSS over the baseline, 10 mm demo die); 100 M pixels took 3.7 GB (≈ 37 B). 40 is the planning value.
 */
export const BYTES_PER_PIXEL_ESTIMATE = 40;
/** Default memory for an analysis's pixel maps when TRENCHANT_ANALYSIS_MEMORY_MB is not set. */
export const DEFAULT_ANALYSIS_MEMORY_MB = 800;

/** Most pixels an analysis may use within `memoryMb` of map memory. */
export function pixelBudget(memoryMb: number): number {
  return Math.max(1_000, Math.floor((memoryMb * 1024 * 1024) / BYTES_PER_PIXEL_ESTIMATE));
}

export type PixelBudgetResult =
  | { ok: true; settings: AnalysisSettings; budgetPixels: number; clamped: boolean }
  | { ok: false; message: string };

/**
 * Settings with `pixel.maxPixels` lowered to the memory budget, so the automatic pixel is derived from the die
 * within it. An explicit `pixel.sizeUm` that would need more pixels than the budget is refused with a message
 * naming the budget and the pixel size that fits. `dieUm` is the die's width and height (layout bounding box).
 */
export function applyPixelBudget(settings: AnalysisSettings, dieUm: [number, number], memoryMb: number): PixelBudgetResult {
  const budgetPixels = pixelBudget(memoryMb);
  const clamped = settings.pixel.maxPixels > budgetPixels;
  const maxPixels = Math.min(settings.pixel.maxPixels, budgetPixels);
  const [w, h] = dieUm;
  if (settings.pixel.sizeUm !== 'auto' && w > 0 && h > 0) {
    const p = settings.pixel.sizeUm;
    const n = Math.max(1, Math.ceil(w / p - 1e-9)) * Math.max(1, Math.ceil(h / p - 1e-9));
    if (n > budgetPixels) {
      const fits = choosePixelUm(w, h, settings.densityWindows, budgetPixels);
      return {
        ok: false,
        message: `pixel size ${p} µm gives ${n.toLocaleString('en-US')} pixels over the ${w} × ${h} µm die, above the memory budget of ${budgetPixels.toLocaleString('en-US')} pixels (${memoryMb} MB at about ${BYTES_PER_PIXEL_ESTIMATE} bytes per pixel, TRENCHANT_ANALYSIS_MEMORY_MB); use a pixel of at least ${fits} µm or 'auto'`,
      };
    }
  }
  return { ok: true, settings: clamped ? { ...settings, pixel: { ...settings.pixel, maxPixels } } : settings, budgetPixels, clamped };
}
