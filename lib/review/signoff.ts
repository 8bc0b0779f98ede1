/**
 * Sign-off of an analysis: allowed only when no error-severity finding is still open or unwaived (only
 * "Accepted with waiver" and "Verified" settle an error), and when every error the pipeline counted is in the
 * stored list (a capped list hides errors nobody can settle). Records who, when, and the model and its version;
 * afterwards the review of that analysis is frozen and changes need a new analysis.
 */
import { z } from 'zod';
import type { Db } from '@/db/client';
import { analysisSignoffs, type AnalysisSignoffRow } from '@/db/schema';
import { recordAudit } from '@/lib/data/audit';
import { ApiError } from '@/lib/http/errors';
import type { FindingItem } from './findings-query';
import { loadFindings, signoffOf } from './findings-store';
import { blocksSignoff } from './statuses';

export const signoffBody = z.object({ note: z.string().trim().max(2000).default('') });

export type SignoffState = {
  signoff: ReturnType<typeof signoffDto> | null;
  /** Error findings still open or unwaived. */
  blocking: number;
  /** Errors the pipeline counted but did not list (capped list); they block sign-off too. */
  unlistedErrors: number;
  canSignOff: boolean;
  reason: string | null;
};

export function signoffDto(s: AnalysisSignoffRow) {
  return {
    signedByName: s.signedByName,
    signedAt: s.signedAt.toISOString(),
    modelName: s.modelName,
    modelVersion: s.modelVersion,
    calibrationDate: s.calibrationDate,
    note: s.note,
    counts: s.counts,
  };
}

export function blockingOf(items: readonly FindingItem[], summary: Record<string, unknown> | null): { blocking: number; unlistedErrors: number } {
  const blocking = items.filter((f) => f.severity === 'error' && blocksSignoff(f.status)).length;
  const listedErrors = items.filter((f) => f.severity === 'error').length;
  const counted = (summary as { flags?: { bySeverity?: { error?: number } } } | null)?.flags?.bySeverity?.error ?? listedErrors;
  return { blocking, unlistedErrors: Math.max(0, counted - listedErrors) };
}

const countText = (n: number, one: string, many: string) => `${n.toLocaleString('en')} ${n === 1 ? one : many}`;

export function signoffState(db: Db, analysisId: string, loaded: Pick<ReturnType<typeof loadFindings>, 'analysis' | 'items'> = loadFindings(db, analysisId)): SignoffState {
  const { analysis, items } = loaded;
  const s = signoffOf(db, analysisId);
  const { blocking, unlistedErrors } = blockingOf(items, analysis.summary);
  const reason = s
    ? 'Already signed off.'
    : unlistedErrors > 0
      ? `${countText(unlistedErrors, 'error finding was', 'error findings were')} counted but not listed (the list is capped); raise the listed-flags limit and run a new analysis.`
      : blocking > 0
        ? `${countText(blocking, 'error finding is', 'error findings are')} still open or unwaived; waive them with a reason or have them verified.`
        : null;
  return { signoff: s ? signoffDto(s) : null, blocking, unlistedErrors, canSignOff: reason === null, reason };
}

export function signOff(db: Db, input: { analysisId: string; teamId: string; actor: { id: string; name: string }; note: string }) {
  const state = signoffState(db, input.analysisId);
  if (!state.canSignOff) throw new ApiError('conflict', `Cannot sign off: ${state.reason}`);
  const { analysis, items } = loadFindings(db, input.analysisId);
  const counts: Record<string, number> = { total: items.length };
  for (const f of items) counts[f.status] = (counts[f.status] ?? 0) + 1;
  const calibrationDate = (analysis.summary as { model?: { calibrationDate?: string | null } } | null)?.model?.calibrationDate ?? null;
  const row = {
    analysisId: input.analysisId,
    signedBy: input.actor.id,
    signedByName: input.actor.name,
    signedAt: new Date(),
    modelName: analysis.modelName,
    modelVersion: analysis.modelVersion,
    calibrationDate,
    note: input.note,
    counts,
  };
  db.transaction((tx) => {
    tx.insert(analysisSignoffs).values(row).run();
    recordAudit({ actorId: input.actor.id, teamId: input.teamId, action: 'revision.signoff', target: `analysis:${input.analysisId}`, detail: { modelVersion: analysis.modelVersion, counts } });
  });
  return signoffDto(row);
}

/** Sign-offs of a project's analyses, newest first, for the project page. */
export function projectSignoffs(db: Db, projectId: string) {
  const rows = db.$client
    .prepare(
      `SELECT s.analysis_id AS analysisId, s.signed_by_name AS signedByName, s.signed_at AS signedAt, s.model_name AS modelName,
        s.model_version AS modelVersion, l.name AS layoutName, r.revision AS revision
       FROM analysis_signoffs s JOIN analyses a ON a.id = s.analysis_id JOIN layout_revisions r ON r.id = a.revision_id
       JOIN layouts l ON l.id = r.layout_id WHERE a.project_id = ? ORDER BY s.signed_at DESC`,
    )
    .all(projectId) as { analysisId: string; signedByName: string; signedAt: number; modelName: string; modelVersion: string; layoutName: string; revision: number }[];
  return rows.map((r) => ({ ...r, signedAt: new Date(r.signedAt).toISOString() }));
}
