/**
 * Every editable parameter of a process model document, with its unit and a one-line explanation, in the order the
 * draft form shows them. The form, the parameter table and the version diff all read this list, so a field's
 * label and unit are written once. Paths are dotted paths into the document (lib/etch/process-model.ts).
 */

export type ParameterField = {
  path: string;
  label: string;
  /** Unit shown after the value ('' for dimensionless). */
  unit: string;
  help: string;
  type: 'number' | 'text' | 'choice';
  choices?: readonly string[];
  /** Optional block the field belongs to: the form offers it as a switch, and leaves the block out when off. */
  block?: 'ion' | 'cyclic' | 'mask' | 'stopLayer';
  required?: boolean;
};

export const MODEL_BLOCKS: Record<NonNullable<ParameterField['block']>, { label: string; help: string }> = {
  ion: { label: 'Ion-enhanced etching', help: 'Adds ion shadowing and an ion/neutral supply ratio; without it the rate is neutral-transport-limited.' },
  cyclic: { label: 'Cyclic (time-multiplexed) steps', help: 'Needed when the mode is cyclic: alternating passivation and etch steps.' },
  mask: { label: 'Mask erosion', help: 'Mask thickness left at the end of the etch.' },
  stopLayer: { label: 'Stop layer', help: 'A layer below the etched film; openings that reach it early over-etch into it.' },
};

export const MODEL_PARAMETERS: readonly ParameterField[] = [
  { path: 'name', label: 'Name', unit: '', type: 'text', help: 'Shown in analysis reports with the version number.', required: true },
  { path: 'description', label: 'Description', unit: '', type: 'text', help: 'What recipe and tool this models; say if the values are invented.' },
  { path: 'mode', label: 'Etch mode', unit: '', type: 'choice', choices: ['continuous', 'cyclic'], help: 'continuous: one steady etch; cyclic: alternating passivation and etch steps.', required: true },
  { path: 'openRateUmPerMin', label: 'Open-field etch rate', unit: 'µm/min', type: 'number', help: 'Rate of a wide opening with no loading (cycle-averaged in cyclic mode).', required: true },
  { path: 'reactionProbability', label: 'Reaction probability S', unit: '', type: 'number', help: 'Chance a neutral reacts at the bottom, in (0, 1]; higher S means stronger lag in narrow openings.', required: true },
  { path: 'loading.coefficient', label: 'Local loading coefficient κ', unit: '', type: 'number', help: 'Rate = open rate / (1 + κ·ρ_eff); 0 = no microloading.', required: true },
  { path: 'loading.lengthUm', label: 'Loading kernel length L', unit: 'µm', type: 'number', help: 'Reach of the effective-density kernel (how far away open area still slows the etch).', required: true },
  { path: 'loading.globalCoefficient', label: 'Global loading coefficient Φ', unit: '', type: 'number', help: 'Mogab form: rate falls with the exposed wafer fraction A as 1/(1 + Φ·A). Default 0.' },
  { path: 'loading.form', label: 'Loading form', unit: '', type: 'choice', choices: ['reciprocal', 'linear'], help: 'reciprocal: R₀/(1 + κρ + ΦA); linear: R₀(1 − κρ − ΦA).' },
  { path: 'loading.kernel', label: 'Loading kernel', unit: '', type: 'choice', choices: ['gaussian', 'exponential'], help: 'Shape of the effective-density kernel.' },
  { path: 'etch.timeMin', label: 'Etch time', unit: 'min', type: 'number', help: 'Recipe etch time.', required: true },
  { path: 'etch.targetDepthUm', label: 'Target depth', unit: 'µm', type: 'number', help: 'Depth every opening should reach.', required: true },
  { path: 'etch.toleranceUm', label: 'Depth tolerance', unit: 'µm', type: 'number', help: 'An opening passes when its depth ≥ target − tolerance.', required: true },
  { path: 'etch.maxAspectRatio', label: 'Maximum aspect ratio', unit: '', type: 'number', help: 'Depth/width at which this process stops etching.', required: true },
  { path: 'etch.stopRateFraction', label: 'Stop-rate fraction', unit: '', type: 'number', help: 'Etch counts as stopped where the local rate falls below this fraction of the open rate. Default 0.01.' },
  { path: 'ion.angularSigmaDeg', label: 'Ion angular spread σ', unit: '°', type: 'number', help: 'Standard deviation of one projected ion angle (not the polar rms; they differ by about √2).', block: 'ion' },
  { path: 'ion.neutralToIonSupplyRatio', label: 'Neutral-to-ion supply ratio r', unit: '', type: 'number', help: '0 = neutral-limited; large = ion-limited.', block: 'ion' },
  { path: 'ion.fluxSite', label: 'Ion flux evaluated at', unit: '', type: 'choice', choices: ['centre', 'bottom-mean'], help: 'Bottom centre (closed form) or averaged over the bottom.', block: 'ion' },
  { path: 'cyclic.etchStepS', label: 'Etch step', unit: 's', type: 'number', help: 'Duration of one etch step.', block: 'cyclic' },
  { path: 'cyclic.passivationStepS', label: 'Passivation step', unit: 's', type: 'number', help: 'Duration of one passivation step.', block: 'cyclic' },
  { path: 'cyclic.lateralToVerticalRatio', label: 'Lateral/vertical step ratio', unit: '', type: 'number', help: 'Undercut per cycle relative to cycle depth; only for the scallop estimate. Default 1.', block: 'cyclic' },
  { path: 'mask.thicknessUm', label: 'Mask thickness', unit: 'µm', type: 'number', help: 'Thickness at the start of the etch.', block: 'mask' },
  { path: 'mask.selectivity', label: 'Mask selectivity', unit: '', type: 'number', help: 'Etched-material rate / mask rate on the open field.', block: 'mask' },
  { path: 'mask.material', label: 'Mask material', unit: '', type: 'text', help: 'For the report only.', block: 'mask' },
  { path: 'stopLayer.depthUm', label: 'Stop-layer depth', unit: 'µm', type: 'number', help: 'Top of the stop layer below the surface; at least the target depth.', block: 'stopLayer' },
  { path: 'stopLayer.selectivity', label: 'Stop-layer selectivity', unit: '', type: 'number', help: 'Etched-material rate / stop-layer rate.', block: 'stopLayer' },
  { path: 'stopLayer.thicknessUm', label: 'Stop-layer thickness', unit: 'µm', type: 'number', help: 'Optional; over-etch beyond it is reported as a break-through.', block: 'stopLayer' },
  { path: 'stopLayer.material', label: 'Stop-layer material', unit: '', type: 'text', help: 'For the report only.', block: 'stopLayer' },
];

/** Value at a dotted path (undefined when any part is missing). */
export function getPath(doc: unknown, path: string): unknown {
  let v: unknown = doc;
  for (const key of path.split('.')) {
    if (v === null || typeof v !== 'object') return undefined;
    v = (v as Record<string, unknown>)[key];
  }
  return v;
}

/** A copy of `doc` with `value` set at `path` (undefined removes the key), creating objects on the way. */
export function setPath<T extends Record<string, unknown>>(doc: T, path: string, value: unknown): T {
  const keys = path.split('.');
  const out: Record<string, unknown> = { ...doc };
  let cur = out;
  keys.forEach((key, i) => {
    if (i === keys.length - 1) {
      if (value === undefined) delete cur[key];
      else cur[key] = value;
      return;
    }
    const next = cur[key];
    const copy = next && typeof next === 'object' && !Array.isArray(next) ? { ...(next as Record<string, unknown>) } : {};
    cur[key] = copy;
    cur = copy;
  });
  return out as T;
}

export function fieldOf(path: string): ParameterField | undefined {
  return MODEL_PARAMETERS.find((f) => f.path === path);
}
