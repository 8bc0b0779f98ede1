/**
 * Process models as data: a team's models and their versions (drafts and immutable published versions), drafts
 * started from an old version, publishing, and resolving the version an analysis uses. Route handlers and pages
 * call these after their access check; nothing here checks roles.
 */
import { randomUUID } from 'node:crypto';
import { and, asc, desc, eq, inArray, max } from 'drizzle-orm';
import type { Db } from '@/db/client';
import { processModels, processModelVersions, projects, users, type ProcessModelRow, type ProcessModelVersionRow } from '@/db/schema';
import { parseProcessModel, type ProcessModel } from '@/lib/etch';
import { ApiError } from '@/lib/http/errors';
import { findBuiltinModel } from '@/lib/jobs/models';
import { editedSinceCalibration } from './calibration-drift';
import { diffModelDocuments, type ParameterChange } from './diff';
import type { CreateModelBody, StoredCalibration, UpdateDraftBody } from './schemas';

export type VersionSummary = {
  id: string;
  modelId: string;
  number: number;
  label: string;
  status: ProcessModelVersionRow['status'];
  note: string;
  basedOnVersionId: string | null;
  createdAt: string;
  updatedAt: string;
  createdByName: string | null;
  publishedAt: string | null;
  calibrationDate: string | null;
  rSquared: number | null;
  /** Fitted parameters whose value differs from the calibration's fit (lib/models/calibration-drift.ts). */
  editedSinceCalibration: string[];
};

export type ModelSummary = {
  id: string;
  teamId: string;
  key: string;
  name: string;
  description: string;
  featureKind: 'trench' | 'hole';
  mode: string;
  versions: VersionSummary[];
};

export type VersionView = VersionSummary & {
  model: Omit<ModelSummary, 'versions'>;
  document: ProcessModel;
  calibration: StoredCalibration | null;
};

const iso = (d: Date | null) => (d ? d.toISOString() : null);
export const versionLabel = (number: number, status: string) => `v${number}${status === 'draft' ? ' (draft)' : ''}`;

/** The process model document, validated; a stored document that no longer validates is a server error. */
function documentOf(row: ProcessModelVersionRow): ProcessModel {
  const parsed = parseProcessModel(row.document);
  if (!parsed.ok) throw new ApiError('internal', `Stored model version v${row.number} does not validate.`);
  return parsed.model;
}

function summarise(row: ProcessModelVersionRow, createdByName: string | null): VersionSummary {
  const cal = (row.document as { calibration?: { date?: unknown; rSquared?: unknown } }).calibration;
  return {
    id: row.id,
    modelId: row.modelId,
    number: row.number,
    label: versionLabel(row.number, row.status),
    status: row.status,
    note: row.note,
    basedOnVersionId: row.basedOnVersionId,
    createdAt: row.createdAt.toISOString(),
    updatedAt: row.updatedAt.toISOString(),
    createdByName,
    publishedAt: iso(row.publishedAt),
    calibrationDate: typeof cal?.date === 'string' ? cal.date : null,
    rSquared: typeof cal?.rSquared === 'number' ? cal.rSquared : null,
    editedSinceCalibration: editedSinceCalibration(row.document).map((d) => d.parameter),
  };
}

function modelHead(m: ProcessModelRow, mode: string): Omit<ModelSummary, 'versions'> {
  return { id: m.id, teamId: m.teamId, key: m.key, name: m.name, description: m.description, featureKind: m.featureKind, mode };
}

/** The team's models with every version, models by name, versions newest first. */
export function listTeamModels(db: Db, teamId: string): ModelSummary[] {
  const models = db.select().from(processModels).where(eq(processModels.teamId, teamId)).orderBy(asc(processModels.name)).all();
  if (models.length === 0) return [];
  const rows = db
    .select({ v: processModelVersions, userName: users.name })
    .from(processModelVersions)
    .leftJoin(users, eq(users.id, processModelVersions.createdBy))
    .where(inArray(processModelVersions.modelId, models.map((m) => m.id)))
    .orderBy(desc(processModelVersions.number))
    .all();
  return models.map((m) => {
    const versions = rows.filter((r) => r.v.modelId === m.id);
    const mode = String((versions[0]?.v.document as { mode?: unknown } | undefined)?.mode ?? 'continuous');
    return { ...modelHead(m, mode), versions: versions.map((r) => summarise(r.v, r.userName)) };
  });
}

/** Team of a version (for the access check); 404 when it does not exist. */
export function versionTeamId(db: Db, versionId: string): string {
  const row = db
    .select({ teamId: processModels.teamId })
    .from(processModelVersions)
    .innerJoin(processModels, eq(processModels.id, processModelVersions.modelId))
    .where(eq(processModelVersions.id, versionId))
    .get();
  if (!row) throw new ApiError('not_found', 'Model version not found.');
  return row.teamId;
}

export function getVersion(db: Db, versionId: string): VersionView {
  const r = db
    .select({ v: processModelVersions, m: processModels, userName: users.name })
    .from(processModelVersions)
    .innerJoin(processModels, eq(processModels.id, processModelVersions.modelId))
    .leftJoin(users, eq(users.id, processModelVersions.createdBy))
    .where(eq(processModelVersions.id, versionId))
    .get();
  if (!r) throw new ApiError('not_found', 'Model version not found.');
  const document = documentOf(r.v);
  return { ...summarise(r.v, r.userName), model: modelHead(r.m, document.mode), document, calibration: (r.v.calibration as StoredCalibration | null) ?? null };
}

/** Field errors of an invalid document, keyed `document.<path>`, and a one-line message. */
export function validateDocument(document: unknown): ProcessModel {
  const parsed = parseProcessModel(document);
  if (parsed.ok) return parsed.model;
  const fieldErrors: Record<string, string[]> = {};
  for (const i of parsed.issues) (fieldErrors[`document.${i.path}`] ??= []).push(i.message);
  const first = parsed.issues[0];
  throw new ApiError(
    'bad_request',
    `The model is not valid: ${first ? `${first.path}: ${first.message}` : 'unknown problem'}${parsed.issues.length > 1 ? ` (and ${parsed.issues.length - 1} more)` : ''}.`,
    { fieldErrors },
  );
}

const slug = (name: string) =>
  name
    .toLowerCase()
    .normalize('NFKD')
    .replace(/[^a-z0-9]+/g, '-')
    .replace(/^-+|-+$/g, '')
    .slice(0, 60) || 'model';

function uniqueKey(db: Db, teamId: string, wanted: string): string {
  const taken = new Set(db.select({ key: processModels.key }).from(processModels).where(eq(processModels.teamId, teamId)).all().map((r) => r.key));
  if (!taken.has(wanted)) return wanted;
  for (let i = 2; ; i++) if (!taken.has(`${wanted}-${i}`)) return `${wanted}-${i}`;
}

/** Creates a model with a first draft (from a team version, a built-in sample or a given document). */
export function createModel(db: Db, input: { teamId: string; userId: string | null; body: CreateModelBody; publish?: boolean; now?: Date }): VersionView {
  const { teamId, userId, body } = input;
  let start: unknown;
  if (body.fromVersionId) {
    if (versionTeamId(db, body.fromVersionId) !== teamId) throw new ApiError('not_found', 'Model version not found.', { fieldErrors: { fromVersionId: ['no such version in this team'] } });
    start = getVersion(db, body.fromVersionId).document;
  } else if (body.fromSample) {
    const sample = findBuiltinModel(body.fromSample);
    if (!sample) throw new ApiError('bad_request', `Unknown sample model "${body.fromSample}".`, { fieldErrors: { fromSample: ['unknown sample id'] } });
    start = sample.model;
  } else if (body.document) start = body.document;
  else throw new ApiError('bad_request', 'Start the model from a version (fromVersionId), a sample (fromSample) or a document.', { fieldErrors: { fromSample: ['choose what to start from'] } });
  const document = validateDocument({ ...(start as Record<string, unknown>), name: body.name, ...(body.description ? { description: body.description } : {}), version: undefined });
  if (input.body.key && db.select({ id: processModels.id }).from(processModels).where(and(eq(processModels.teamId, teamId), eq(processModels.key, input.body.key))).get()) {
    throw new ApiError('conflict', `The team already has a model with the key "${input.body.key}".`, { fieldErrors: { key: ['already used in this team'] } });
  }
  const now = input.now ?? new Date();
  const modelId = randomUUID();
  const versionId = randomUUID();
  db.transaction((tx) => {
    tx.insert(processModels)
      .values({ id: modelId, teamId, key: body.key ?? uniqueKey(db, teamId, slug(body.name)), name: body.name, description: body.description ?? document.description ?? '', featureKind: body.featureKind, createdBy: userId, createdAt: now })
      .run();
    tx.insert(processModelVersions)
      .values({ id: versionId, modelId, number: 1, status: 'draft', document: document as unknown as Record<string, unknown>, calibration: null, note: '', basedOnVersionId: body.fromVersionId ?? null, createdBy: userId, createdAt: now, updatedAt: now, publishedBy: null, publishedAt: null })
      .run();
  });
  if (input.publish) publishVersion(db, { versionId, userId, now });
  return getVersion(db, versionId);
}

/** A new draft of the same model, starting from `versionId`'s document and calibration. */
export function createDraftFrom(db: Db, input: { versionId: string; userId: string | null; now?: Date }): VersionView {
  const from = db.select().from(processModelVersions).where(eq(processModelVersions.id, input.versionId)).get();
  if (!from) throw new ApiError('not_found', 'Model version not found.');
  const next = (db.select({ n: max(processModelVersions.number) }).from(processModelVersions).where(eq(processModelVersions.modelId, from.modelId)).get()?.n ?? 0) + 1;
  const now = input.now ?? new Date();
  const id = randomUUID();
  const { version: _old, ...document } = from.document as Record<string, unknown>;
  db.insert(processModelVersions)
    .values({ id, modelId: from.modelId, number: next, status: 'draft', document, calibration: from.calibration, note: '', basedOnVersionId: from.id, createdBy: input.userId, createdAt: now, updatedAt: now, publishedBy: null, publishedAt: null })
    .run();
  return getVersion(db, id);
}

function requireDraft(db: Db, versionId: string): ProcessModelVersionRow {
  const row = db.select().from(processModelVersions).where(eq(processModelVersions.id, versionId)).get();
  if (!row) throw new ApiError('not_found', 'Model version not found.');
  if (row.status !== 'draft') throw new ApiError('conflict', `v${row.number} is published and cannot change; start a new draft from it.`);
  return row;
}

export function updateDraft(db: Db, input: { versionId: string; body: UpdateDraftBody; now?: Date }): VersionView {
  const row = requireDraft(db, input.versionId);
  const patch: Partial<ProcessModelVersionRow> = { updatedAt: input.now ?? new Date() };
  if (input.body.document !== undefined) {
    const { version: _v, ...rest } = input.body.document;
    patch.document = validateDocument(rest) as unknown as Record<string, unknown>;
  }
  if (input.body.note !== undefined) patch.note = input.body.note;
  if (input.body.calibration !== undefined) patch.calibration = input.body.calibration as unknown as Record<string, unknown> | null;
  db.update(processModelVersions).set(patch).where(eq(processModelVersions.id, row.id)).run();
  return getVersion(db, row.id);
}

export function deleteDraft(db: Db, versionId: string): void {
  const row = requireDraft(db, versionId);
  db.transaction((tx) => {
    tx.delete(processModelVersions).where(eq(processModelVersions.id, row.id)).run();
    // A model whose only version was this draft goes with it.
    const left = tx.select({ id: processModelVersions.id }).from(processModelVersions).where(eq(processModelVersions.modelId, row.modelId)).get();
    if (!left) tx.delete(processModels).where(eq(processModels.id, row.modelId)).run();
  });
}

/** Publishes a draft: its document gets the model's name and the label "vN" as its version, and never changes again. */
export function publishVersion(db: Db, input: { versionId: string; userId: string | null; now?: Date }): VersionView {
  const row = requireDraft(db, input.versionId);
  const model = db.select().from(processModels).where(eq(processModels.id, row.modelId)).get();
  const document = validateDocument({ ...row.document, name: model?.name ?? row.document.name, version: `v${row.number}` });
  const now = input.now ?? new Date();
  db.update(processModelVersions)
    .set({ status: 'published', document: document as unknown as Record<string, unknown>, publishedBy: input.userId, publishedAt: now, updatedAt: now })
    .where(and(eq(processModelVersions.id, row.id), eq(processModelVersions.status, 'draft')))
    .run();
  return getVersion(db, row.id);
}

/** Parameter changes from `fromVersionId` to `toVersionId` (both must be in the same team). */
export function diffVersions(db: Db, fromVersionId: string, toVersionId: string): { from: VersionSummary; to: VersionSummary; changes: ParameterChange[] } {
  if (versionTeamId(db, fromVersionId) !== versionTeamId(db, toVersionId)) throw new ApiError('not_found', 'Model version not found.');
  const a = getVersion(db, fromVersionId);
  const b = getVersion(db, toVersionId);
  return { from: a, to: b, changes: diffModelDocuments(a.document, b.document) };
}

/** Published versions the team's analyses may use, newest version of each model first. */
export type PublishedChoice = {
  versionId: string;
  modelId: string;
  modelKey: string;
  name: string;
  number: number;
  description: string;
  featureKind: 'trench' | 'hole';
  mode: string;
  targetDepthUm: number;
  toleranceUm: number;
  maxAspectRatio: number;
  loadingLengthUm: number;
  calibrationDate: string | null;
  latest: boolean;
};

export function listPublishedChoices(db: Db, teamId: string): PublishedChoice[] {
  const rows = db
    .select({ v: processModelVersions, m: processModels })
    .from(processModelVersions)
    .innerJoin(processModels, eq(processModels.id, processModelVersions.modelId))
    .where(and(eq(processModels.teamId, teamId), eq(processModelVersions.status, 'published')))
    .orderBy(asc(processModels.name), desc(processModelVersions.number))
    .all();
  const seen = new Set<string>();
  return rows.map(({ v, m }) => {
    const d = documentOf(v);
    const latest = !seen.has(m.id);
    seen.add(m.id);
    return {
      versionId: v.id,
      modelId: m.id,
      modelKey: m.key,
      name: m.name,
      number: v.number,
      description: m.description,
      featureKind: m.featureKind,
      mode: d.mode,
      targetDepthUm: d.etch.targetDepthUm,
      toleranceUm: d.etch.toleranceUm,
      maxAspectRatio: d.etch.maxAspectRatio,
      loadingLengthUm: d.loading.lengthUm,
      calibrationDate: d.calibration?.date ?? null,
      latest,
    };
  });
}

/**
 * The published version an analysis in `teamId` asks for: a version id, or a model id / key (its newest published
 * version). Null when nothing in the team matches (the caller may then try the built-in samples).
 */
export function resolvePublishedVersion(db: Db, teamId: string, idOrKey: string): { versionId: string; model: ProcessModel; label: string } | null {
  const rows = db
    .select({ v: processModelVersions, m: processModels })
    .from(processModelVersions)
    .innerJoin(processModels, eq(processModels.id, processModelVersions.modelId))
    .where(and(eq(processModels.teamId, teamId), eq(processModelVersions.status, 'published')))
    .orderBy(desc(processModelVersions.number))
    .all();
  const hit = rows.find((r) => r.v.id === idOrKey) ?? rows.find((r) => r.m.id === idOrKey || r.m.key === idOrKey);
  if (!hit) {
    const draft = db.select({ status: processModelVersions.status }).from(processModelVersions).innerJoin(processModels, eq(processModels.id, processModelVersions.modelId)).where(and(eq(processModelVersions.id, idOrKey), eq(processModels.teamId, teamId))).get();
    if (draft) throw new ApiError('unprocessable', 'That model version is a draft; analyses use published versions only.', { fieldErrors: { modelId: ['draft versions cannot be used for analyses'] } });
    return null;
  }
  return { versionId: hit.v.id, model: documentOf(hit.v), label: `v${hit.v.number}` };
}

/** Team of a project (404 when it does not exist). */
export function projectTeamId(db: Db, projectId: string): string {
  const row = db.select({ teamId: projects.teamId }).from(projects).where(eq(projects.id, projectId)).get();
  if (!row) throw new ApiError('not_found', 'Project not found.');
  return row.teamId;
}
