/**
 * "Save as new analysis" for a viewer what-if: the analysis's own process model with the slider values put in,
 * recorded as derived (name kept, version suffixed, description listing the original version and every changed
 * parameter), queued through the ordinary create path with the analysis's stored settings.
 */
import { eq } from 'drizzle-orm';
import { z } from 'zod';
import type { Db } from '@/db/client';
import { analyses, type AnalysisRow } from '@/db/schema';
import type { ProcessModel } from '@/lib/etch/process-model';
import { ApiError } from '@/lib/http/errors';
import { createAnalysis } from '@/lib/jobs/analyses';
import { paramsOf, type WhatIfParams } from './whatif';

const positive = (name: string) => z.number({ error: `${name} must be a number` }).finite().positive(`${name} must be > 0`);
export const whatIfSaveBody = z
  .object({
    params: z.strictObject({
      timeMin: positive('params.timeMin'),
      openRateUmPerMin: positive('params.openRateUmPerMin'),
      reactionProbability: positive('params.reactionProbability').max(1, 'params.reactionProbability must be ≤ 1'),
      loadingCoefficient: z.number({ error: 'params.loadingCoefficient must be a number' }).finite().min(0, 'params.loadingCoefficient must be ≥ 0'),
    }),
  })
  .strict();

const LABELS: Record<keyof WhatIfParams, { path: string; unit: string }> = {
  timeMin: { path: 'etch.timeMin', unit: 'min' },
  openRateUmPerMin: { path: 'openRateUmPerMin', unit: 'µm/min' },
  reactionProbability: { path: 'reactionProbability', unit: '' },
  loadingCoefficient: { path: 'loading.coefficient', unit: '' },
};

export type ParamChange = { path: string; from: number; to: number; unit: string };

/** Parameters that differ from the model's own (relative 1e-9, so a slider back at the stored value is no change). */
export function changedParams(model: ProcessModel, p: WhatIfParams): ParamChange[] {
  const base = paramsOf(model);
  return (Object.keys(LABELS) as (keyof WhatIfParams)[])
    .filter((k) => Math.abs(p[k] - base[k]) > 1e-9 * Math.max(Math.abs(base[k]), 1e-12))
    .map((k) => ({ path: LABELS[k].path, from: base[k], to: p[k], unit: LABELS[k].unit }));
}

const fmt = (c: ParamChange) => `${c.path} ${Number(c.from.toPrecision(6))} → ${Number(c.to.toPrecision(6))}${c.unit ? ` ${c.unit}` : ''}`;

/** The derived model document: the original with the what-if values, its provenance in name/version/description. */
export function derivedModel(model: ProcessModel, p: WhatIfParams, origin: { analysisId: string; modelName: string; modelVersion: string }): { model: ProcessModel; changes: ParamChange[] } {
  const changes = changedParams(model, p);
  if (changes.length === 0) throw new ApiError('bad_request', 'The what-if parameters equal the analysed model; there is nothing new to run.');
  const note = `What-if derived from ${origin.modelName} version ${origin.modelVersion} (analysis ${origin.analysisId}), changed: ${changes.map(fmt).join('; ')}.${model.calibration ? ' The calibration record is the original model\u2019s; the changed values were not calibrated.' : ''}`;
  const description = model.description ? `${note} Original description: ${model.description}` : note;
  return {
    changes,
    model: {
      ...model,
      version: `${origin.modelVersion}+what-if`.slice(0, 100),
      description: description.slice(0, 2000),
      openRateUmPerMin: p.openRateUmPerMin,
      reactionProbability: p.reactionProbability,
      loading: { ...model.loading, coefficient: p.loadingCoefficient },
      etch: { ...model.etch, timeMin: p.timeMin },
    },
  };
}

/** Queues a new analysis of the same revision with the stored settings and the derived model. */
export function saveWhatIf(db: Db, input: { analysisId: string; userId: string; params: WhatIfParams }): { row: AnalysisRow; changes: ParamChange[] } {
  const a = db.select().from(analyses).where(eq(analyses.id, input.analysisId)).get();
  if (!a) throw new ApiError('not_found', 'Analysis not found.');
  const { model, changes } = derivedModel(a.model as unknown as ProcessModel, input.params, { analysisId: a.id, modelName: a.modelName, modelVersion: a.modelVersion });
  const row = createAnalysis(db, { projectId: a.projectId, userId: input.userId, body: { revisionId: a.revisionId, settings: a.settings, model: model as unknown as Record<string, unknown> } });
  return { row, changes };
}
