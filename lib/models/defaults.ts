/**
 * Sensible defaults for the new-analysis form (pure): the opening kind a project etches, and the model version to
 * preselect for it.
 *
 * Projects carry no etch kind of their own, so it is read from the project's name and description: via, TSV and hole
 * words mean holes, otherwise trenches (the common deep-etch case). The model to preselect: the one the project's
 * last analysis used, else the newest published version made for that kind — for trenches a continuous-mode one
 * first, for holes a cyclic one first (through-silicon vias are usually etched cyclically), calibrated before
 * uncalibrated — never simply the first id in the list.
 */

export type EtchKind = 'trench' | 'hole';

const HOLE_WORDS = /\b(vias?|tsvs?|through[- ]silicon[- ]vias?|holes?|contacts?)\b/i;

export function projectEtchKind(project: { name: string; description: string }): EtchKind {
  return HOLE_WORDS.test(`${project.name} ${project.description}`) ? 'hole' : 'trench';
}

export type ModelOption = { id: string; modelId: string | null; featureKind: EtchKind; mode: string; calibrated: boolean; latest: boolean };

export function defaultModelOption(options: ModelOption[], kind: EtchKind, lastUsedModelId?: string | null): string | null {
  if (lastUsedModelId) {
    const again = options.find((o) => o.latest && o.modelId === lastUsedModelId);
    if (again) return again.id;
  }
  const preferredMode = kind === 'trench' ? 'continuous' : 'cyclic';
  const score = (o: ModelOption) => (o.featureKind === kind ? 8 : 0) + (o.mode === preferredMode ? 4 : 0) + (o.calibrated ? 2 : 0) + (o.latest ? 1 : 0) + (o.modelId ? 0.5 : 0);
  let best: ModelOption | null = null;
  for (const o of options) if (!best || score(o) > score(best)) best = o;
  return best?.id ?? null;
}
