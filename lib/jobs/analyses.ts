/**
 * Analyses as data: create (validate settings, layers and model, then queue), read, list, cancel. Route handlers
 * and pages call these after their access check; nothing here checks roles.
 */
import { randomUUID } from 'node:crypto';
import { and, desc, eq } from 'drizzle-orm';
import { z } from 'zod';
import type { Db } from '@/db/client';
import { analyses, layoutRevisions, layouts, users, type AnalysisRow, type LayerTableRow } from '@/db/schema';
import { parseProcessModel, type ProcessModel } from '@/lib/etch';
import { ApiError } from '@/lib/http/errors';
import { parseAnalysisSettings, type AnalysisSettings } from '@/lib/pipeline/settings';
import { applyRuleSet } from '@/lib/models/rule-set-schema';
import { ruleSetForAnalysis } from '@/lib/models/rule-sets';
import { projectTeamId, resolvePublishedVersion } from '@/lib/models/versions';
import { findBuiltinModel } from './models';
import { jobQueue } from './queue';

export const createAnalysisBody = z
  .object({
    revisionId: z.string({ error: 'Choose a layout revision (revisionId).' }).min(1, 'Choose a layout revision (revisionId).').max(100),
    settings: z.record(z.string(), z.unknown(), { error: 'settings must be a JSON object.' }),
    /** A published model version of the team (version id, or model id/key for its newest version), or a built-in sample id (GET /api/v1/models). */
    modelId: z.string().min(1).max(100).optional(),
    /** A saved rule set of the team: its windows, kernel, limits and severities replace those in settings. */
    ruleSetId: z.string().min(1).max(100).optional(),
    /** A process model document of your own. */
    model: z.record(z.string(), z.unknown(), { error: 'model must be a JSON object.' }).optional(),
  })
  .strict()
  .refine((b) => (b.modelId === undefined) !== (b.model === undefined), {
    message: 'Give either modelId (a built-in model) or model (your own model document), not both.',
    path: ['modelId'],
  });
export type CreateAnalysisBody = z.infer<typeof createAnalysisBody>;

const layerName = (l: { layer: number; datatype: number }) => `${l.layer}/${l.datatype}`;

/** Settings check against the revision's layer table: every etch layer must be present. */
export function assertLayersPresent(settings: AnalysisSettings, layerTable: LayerTableRow[]): void {
  const present = new Set(layerTable.map(layerName));
  const missing = settings.etchLayers.filter((l) => !present.has(layerName(l)));
  if (missing.length === 0) return;
  const list = layerTable.length ? layerTable.map(layerName).join(', ') : 'none';
  throw new ApiError('unprocessable', `Layer ${missing.map(layerName).join(', ')} is not in this layout; layers present: ${list}.`, {
    fieldErrors: { 'settings.etchLayers': [`not in this layout: ${missing.map(layerName).join(', ')}; present: ${list}`] },
  });
}

function resolveModel(body: CreateAnalysisBody): { model: ProcessModel; source: string } {
  if (body.modelId !== undefined) {
    const builtin = findBuiltinModel(body.modelId);
    if (!builtin) throw new ApiError('unprocessable', `Unknown model "${body.modelId}".`, { fieldErrors: { modelId: ['unknown model id'] } });
    return { model: builtin.model, source: `builtin:${builtin.id}` };
  }
  const parsed = parseProcessModel(body.model);
  if (!parsed.ok) {
    const fieldErrors: Record<string, string[]> = {};
    for (const i of parsed.issues) (fieldErrors[`model.${i.path}`.replace(/\.$/, '')] ??= []).push(i.message);
    const first = parsed.issues[0];
    throw new ApiError('unprocessable', `The process model is not valid: ${first ? `${first.path || '(document)'}: ${first.message}` : 'unknown problem'}${parsed.issues.length > 1 ? ` (and ${parsed.issues.length - 1} more)` : ''}.`, { fieldErrors });
  }
  return { model: parsed.model, source: 'uploaded' };
}

function modelLabel(model: ProcessModel): { name: string; version: string } {
  const m = model as { name?: unknown; version?: unknown };
  return { name: typeof m.name === 'string' && m.name ? m.name : 'unnamed model', version: m.version == null ? 'unversioned' : String(m.version) };
}

/** The job columns of an analysis that has just been queued (new, or run again). */
export const QUEUED_JOB_STATE = {
  status: 'queued',
  stage: null,
  progress: 0,
  errorCode: null,
  errorMessage: null,
  attempts: 0,
  startedAt: null,
  finishedAt: null,
  summary: null,
  resultDir: null,
} as const satisfies Partial<AnalysisRow>;

/** Validates and queues a new analysis of a revision in `projectId`. */
export function createAnalysis(db: Db, input: { projectId: string; userId: string; body: CreateAnalysisBody }): AnalysisRow {
  const { projectId, userId, body } = input;
  const rev = db
    .select({ id: layoutRevisions.id, layerTable: layoutRevisions.layerTable })
    .from(layoutRevisions)
    .innerJoin(layouts, eq(layouts.id, layoutRevisions.layoutId))
    .where(and(eq(layoutRevisions.id, body.revisionId), eq(layouts.projectId, projectId)))
    .get();
  if (!rev) throw new ApiError('not_found', 'Layout revision not found in this project.', { fieldErrors: { revisionId: ['no such revision in this project'] } });
  const teamId = projectTeamId(db, projectId);
  const settings = parseAnalysisSettings(body.ruleSetId ? applyRuleSet(body.settings, ruleSetForAnalysis(db, teamId, body.ruleSetId).rules) : body.settings);
  if (!settings.ok) {
    const fieldErrors: Record<string, string[]> = {};
    for (const i of settings.issues) (fieldErrors[i.path ? `settings.${i.path}` : 'settings'] ??= []).push(i.message);
    const first = settings.issues[0];
    throw new ApiError('bad_request', `Some settings are not valid: ${first ? `${first.path || 'settings'}: ${first.message}` : ''}${settings.issues.length > 1 ? ` (and ${settings.issues.length - 1} more)` : ''}.`, { fieldErrors });
  }
  assertLayersPresent(settings.settings, rev.layerTable);
  const teamModel = body.modelId !== undefined ? resolvePublishedVersion(db, teamId, body.modelId) : null;
  const { model, source } = teamModel ? { model: teamModel.model, source: `version:${teamModel.versionId}` } : resolveModel(body);
  const label = modelLabel(model);
  const row: AnalysisRow = {
    id: randomUUID(),
    projectId,
    revisionId: rev.id,
    createdBy: userId,
    createdAt: new Date(),
    settings: settings.settings as unknown as Record<string, unknown>,
    model: model as unknown as Record<string, unknown>,
    modelName: label.name,
    modelVersion: label.version,
    modelSource: source,
    ...QUEUED_JOB_STATE,
    modelVersionId: teamModel?.versionId ?? null,
    ruleSetId: body.ruleSetId ?? null,
  };
  db.insert(analyses).values(row).run();
  jobQueue().pump();
  return row;
}

/** Project of an analysis (for the access check); 404 when it does not exist. */
export function analysisProjectId(db: Db, analysisId: string): string {
  const row = db.select({ projectId: analyses.projectId }).from(analyses).where(eq(analyses.id, analysisId)).get();
  if (!row) throw new ApiError('not_found', 'Analysis not found.');
  return row.projectId;
}

export type AnalysisView = {
  id: string;
  projectId: string;
  status: AnalysisRow['status'];
  stage: string | null;
  progress: number;
  errorCode: string | null;
  errorMessage: string | null;
  createdAt: string;
  createdByName: string | null;
  startedAt: string | null;
  finishedAt: string | null;
  attempts: number;
  revision: { id: string; revision: number; layoutId: string; layoutName: string; originalName: string };
  model: { name: string; version: string; source: string };
  settings: Record<string, unknown>;
};

const iso = (d: Date | null) => (d ? d.toISOString() : null);

function viewQuery(db: Db) {
  return db
    .select({ a: analyses, rev: { id: layoutRevisions.id, revision: layoutRevisions.revision, originalName: layoutRevisions.originalName }, layout: { id: layouts.id, name: layouts.name }, userName: users.name })
    .from(analyses)
    .innerJoin(layoutRevisions, eq(layoutRevisions.id, analyses.revisionId))
    .innerJoin(layouts, eq(layouts.id, layoutRevisions.layoutId))
    .leftJoin(users, eq(users.id, analyses.createdBy));
}

function toView(r: { a: AnalysisRow; rev: { id: string; revision: number; originalName: string }; layout: { id: string; name: string }; userName: string | null }): AnalysisView {
  const a = r.a;
  return {
    id: a.id,
    projectId: a.projectId,
    status: a.status,
    stage: a.stage,
    progress: a.progress,
    errorCode: a.errorCode,
    errorMessage: a.errorMessage,
    createdAt: a.createdAt.toISOString(),
    createdByName: r.userName,
    startedAt: iso(a.startedAt),
    finishedAt: iso(a.finishedAt),
    attempts: a.attempts,
    revision: { id: r.rev.id, revision: r.rev.revision, layoutId: r.layout.id, layoutName: r.layout.name, originalName: r.rev.originalName },
    model: { name: a.modelName, version: a.modelVersion, source: a.modelSource },
    settings: a.settings,
  };
}

export function getAnalysisView(db: Db, analysisId: string): AnalysisView {
  const r = viewQuery(db).where(eq(analyses.id, analysisId)).get();
  if (!r) throw new ApiError('not_found', 'Analysis not found.');
  return toView(r);
}

export function listProjectAnalyses(db: Db, projectId: string, limit = 200): AnalysisView[] {
  return viewQuery(db).where(eq(analyses.projectId, projectId)).orderBy(desc(analyses.createdAt)).limit(limit).all().map(toView);
}

/** Cancels a queued or running analysis; 409 when it already finished. */
export function cancelAnalysis(db: Db, analysisId: string): AnalysisView {
  const status = jobQueue().cancel(analysisId);
  if (status === null) {
    const view = getAnalysisView(db, analysisId);
    throw new ApiError('conflict', `The analysis has already finished (${view.status}); nothing to cancel.`);
  }
  return getAnalysisView(db, analysisId);
}
