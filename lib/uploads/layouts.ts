/**
 * Layouts and revisions as data. `storeLayoutUpload` turns a received upload into a new revision: recognise the
 * format from the first bytes, read the whole file once with the layout reader (validation + layer table), put
 * it in storage (lib/storage: the data folder or S3) and insert the rows. Any failure removes the file and writes no
 * row.
 */
import { randomUUID } from 'node:crypto';
import { and, asc, desc, eq, max } from 'drizzle-orm';
import { z } from 'zod';
import type { Db } from '@/db/client';
import { analyses, layoutRevisions, layouts, users, type LayerTableRow, type LayoutFormat, type LayoutRevisionRow } from '@/db/schema';
import { ApiError } from '@/lib/http/errors';
import { revisionRelPath } from '@/lib/jobs/paths';
import { getTeamLimits, teamOfProject } from '@/lib/jobs/team-limits';
import type { FlatLayout } from '@/lib/layout/types';
import { wholeReadLimitBytes } from '@/lib/layout/whole-read-limit';
import { storage } from '@/lib/storage';
import type { UploadCheckResult } from './check-layout';
import { checkUploadInWorker } from './check-pool';
import { receiveUpload, removeQuietly, type ReceivedFile } from './receive';

const CSV_MAGIC = '# trenchant-polygons v1';

/** Format from the first bytes: GDSII HEADER record (00 06 00 02) or the polygon CSV's first line. */
export function sniffLayoutFormat(head: Uint8Array): LayoutFormat | null {
  if (head.length >= 4 && head[0] === 0 && head[1] === 6 && head[2] === 0 && head[3] === 2) return 'gdsii';
  const text = new TextDecoder('latin1').decode(head).replace(/^\u00EF\u00BB\u00BF/, '').trimStart().toLowerCase();
  if (text.startsWith(CSV_MAGIC)) return 'csv';
  return null;
}

function hex(head: Uint8Array): string {
  return Array.from(head.subarray(0, 8), (v) => v.toString(16).padStart(2, '0')).join(' ');
}

export const uploadFields = z.object({
  name: z.string().trim().min(1, 'Give the layout a name.').max(120, 'Keep the layout name under 120 characters.').optional(),
  layoutId: z.string().min(1).max(100).optional(),
  note: z.string().trim().max(500, 'Keep the note under 500 characters.').optional(),
});

export function layerTableOf(layout: FlatLayout): LayerTableRow[] {
  return layout.layers
    .map((s) => ({ layer: s.layer, datatype: s.datatype, polygons: s.count, points: s.offsets[s.count] ?? 0 }))
    .sort((a, b) => a.layer - b.layer || a.datatype - b.datatype);
}

export type RevisionView = {
  id: string;
  layoutId: string;
  layoutName: string;
  projectId: string;
  revision: number;
  originalName: string;
  uploadedAt: string;
  uploadedByName: string | null;
  sha256: string;
  sizeBytes: number;
  format: LayoutFormat;
  layers: LayerTableRow[];
  topCell: string;
  libraryName: string;
  dbuUm: number;
  bboxUm: [number, number, number, number] | null;
  polygonCount: number;
  note: string;
  /** What the reader repaired (e.g. an unclosed BOUNDARY closed), each naming its byte offset. */
  readWarnings: string[];
  /** GDSII above TRENCHANT_WHOLE_READ_MB: checked from its on-disk index, analysed tiled, drawn a window at a time. */
  readsThroughIndex: boolean;
};

function toRevisionView(r: LayoutRevisionRow, layout: { id: string; name: string; projectId: string }, userName: string | null): RevisionView {
  return {
    id: r.id,
    layoutId: layout.id,
    layoutName: layout.name,
    projectId: layout.projectId,
    revision: r.revision,
    originalName: r.originalName,
    uploadedAt: r.uploadedAt.toISOString(),
    uploadedByName: userName,
    sha256: r.sha256,
    sizeBytes: r.sizeBytes,
    format: r.format,
    layers: r.layerTable,
    topCell: r.topCell,
    libraryName: r.libraryName,
    dbuUm: r.dbuUm,
    bboxUm: r.bboxDbu ? (r.bboxDbu.map((v) => v * r.dbuUm) as [number, number, number, number]) : null,
    polygonCount: r.polygonCount,
    note: r.note,
    readWarnings: r.readWarnings,
    readsThroughIndex: r.format === 'gdsii' && r.sizeBytes > wholeReadLimitBytes(),
  };
}

/**
 * Recognises the format from the first bytes (here: cheap), then checks the file in the upload worker pool against
 * the team's limits (never on this thread: see check-layout.ts): read whole, or for GDSII above
 * TRENCHANT_WHOLE_READ_MB from its on-disk index (check-indexed.ts).
 */
async function validateLayoutFile(file: ReceivedFile, limits: { maxPolygons: number; maxPoints: number }): Promise<Extract<UploadCheckResult, { ok: true }>> {
  const sniffed = sniffLayoutFormat(file.head);
  if (file.sizeBytes === 0) throw new ApiError('unprocessable', `${file.originalName}: the file is empty (0 bytes).`);
  if (!sniffed) {
    throw new ApiError(
      'unprocessable',
      `${file.originalName}: not a layout Trenchant can read — neither a GDSII stream (HEADER record 00 06 00 02 at byte 0) nor a polygon CSV starting with "${CSV_MAGIC}"; first bytes: ${hex(file.head)}.`,
    );
  }
  let checked: UploadCheckResult;
  try {
    checked = await checkUploadInWorker(file.tmpPath, limits);
  } catch (err) {
    // The check's thread died (out of memory, native crash): the file is refused, the server carries on.
    console.error('[trenchant] upload check worker failed:', err);
    throw new ApiError('unprocessable', `${file.originalName}: the layout could not be checked within the upload worker's memory; nothing was stored.`);
  }
  if (!checked.ok) throw new ApiError('unprocessable', `${file.originalName}: ${checked.message}.`.replace(/\.\.$/, '.'));
  return checked;
}

/** Receives an upload and stores it as the next revision of a layout in `projectId`. */
export async function storeLayoutUpload(db: Db, input: { projectId: string; userId: string; request: Request; layoutId?: string }): Promise<RevisionView> {
  const { file, fields } = await receiveUpload(input.request);
  let storedKey: string | null = null;
  try {
    const parsed = uploadFields.safeParse({ name: fields.name || undefined, layoutId: input.layoutId ?? (fields.layoutId || undefined), note: fields.note || undefined });
    if (!parsed.success) throw parsed.error;
    const checked = await validateLayoutFile(file, getTeamLimits(db, teamOfProject(db, input.projectId)));
    const format = checked.format;
    const name = parsed.data.name ?? (file.originalName.replace(/\.[^.]*$/, '').trim() || 'layout');

    let existing = parsed.data.layoutId
      ? db.select().from(layouts).where(and(eq(layouts.id, parsed.data.layoutId), eq(layouts.projectId, input.projectId))).get()
      : db.select().from(layouts).where(and(eq(layouts.name, name), eq(layouts.projectId, input.projectId))).get();
    if (parsed.data.layoutId && !existing) throw new ApiError('not_found', 'Layout not found in this project.', { fieldErrors: { layoutId: ['no such layout in this project'] } });

    const revisionId = randomUUID();
    const rel = revisionRelPath(input.projectId, revisionId, format);
    await storage().putFile(rel, file.tmpPath, { move: true });
    storedKey = rel;

    const now = new Date();
    const row = db.transaction((tx) => {
      if (!existing) {
        existing = { id: randomUUID(), projectId: input.projectId, name, createdBy: input.userId, createdAt: now };
        tx.insert(layouts).values(existing).run();
      }
      const last = tx.select({ n: max(layoutRevisions.revision) }).from(layoutRevisions).where(eq(layoutRevisions.layoutId, existing.id)).get()?.n ?? 0;
      const rev: LayoutRevisionRow = {
        id: revisionId,
        layoutId: existing.id,
        revision: last + 1,
        uploadedBy: input.userId,
        uploadedAt: now,
        originalName: file.originalName.slice(0, 255),
        sha256: file.sha256,
        sizeBytes: file.sizeBytes,
        format,
        storedPath: rel,
        layerTable: checked.layers,
        topCell: checked.topCell,
        libraryName: checked.libraryName,
        dbuUm: checked.dbuUm,
        bboxDbu: checked.bboxDbu,
        polygonCount: checked.polygonCount,
        note: parsed.data.note ?? '',
        readWarnings: checked.warnings,
      };
      tx.insert(layoutRevisions).values(rev).run();
      return rev;
    });
    const user = db.select({ name: users.name }).from(users).where(eq(users.id, input.userId)).get();
    return toRevisionView(row, existing!, user?.name ?? null);
  } catch (err) {
    await removeQuietly(file.tmpPath);
    if (storedKey) await storage().delete(storedKey).catch(() => undefined);
    throw err;
  }
}

export type LayoutView = { id: string; name: string; projectId: string; createdAt: string; revisions: (RevisionView & { analysisCount: number })[] };

/** Layouts of a project with their revisions (newest first). */
export function listProjectLayouts(db: Db, projectId: string): LayoutView[] {
  const rows = db
    .select({ rev: layoutRevisions, layout: layouts, userName: users.name })
    .from(layoutRevisions)
    .innerJoin(layouts, eq(layouts.id, layoutRevisions.layoutId))
    .leftJoin(users, eq(users.id, layoutRevisions.uploadedBy))
    .where(eq(layouts.projectId, projectId))
    .orderBy(asc(layouts.name), desc(layoutRevisions.revision))
    .all();
  const counts = new Map<string, number>();
  for (const a of db.select({ revisionId: analyses.revisionId }).from(analyses).where(eq(analyses.projectId, projectId)).all()) {
    counts.set(a.revisionId, (counts.get(a.revisionId) ?? 0) + 1);
  }
  const out = new Map<string, LayoutView>();
  for (const r of rows) {
    let v = out.get(r.layout.id);
    if (!v) {
      v = { id: r.layout.id, name: r.layout.name, projectId: r.layout.projectId, createdAt: r.layout.createdAt.toISOString(), revisions: [] };
      out.set(r.layout.id, v);
    }
    v.revisions.push({ ...toRevisionView(r.rev, r.layout, r.userName), analysisCount: counts.get(r.rev.id) ?? 0 });
  }
  return [...out.values()];
}

/** Project of a layout (for the access check); 404 when it does not exist. */
export function layoutProjectId(db: Db, layoutId: string): string {
  const row = db.select({ projectId: layouts.projectId }).from(layouts).where(eq(layouts.id, layoutId)).get();
  if (!row) throw new ApiError('not_found', 'Layout not found.');
  return row.projectId;
}

export function getLayout(db: Db, layoutId: string): LayoutView {
  const projectId = layoutProjectId(db, layoutId);
  const view = listProjectLayouts(db, projectId).find((l) => l.id === layoutId);
  if (!view) throw new ApiError('not_found', 'Layout not found.');
  return view;
}

/** A revision and its project (for the access check); 404 when it does not exist. */
export function getRevision(db: Db, revisionId: string): RevisionView {
  const r = db
    .select({ rev: layoutRevisions, layout: layouts, userName: users.name })
    .from(layoutRevisions)
    .innerJoin(layouts, eq(layouts.id, layoutRevisions.layoutId))
    .leftJoin(users, eq(users.id, layoutRevisions.uploadedBy))
    .where(eq(layoutRevisions.id, revisionId))
    .get();
  if (!r) throw new ApiError('not_found', 'Layout revision not found.');
  return toRevisionView(r.rev, r.layout, r.userName);
}
