/**
 * Revision compare between two finished analyses of one project (lib/review/compare.ts does the matching), and
 * carrying waivers of the earlier analysis over to the findings that persist in the later one. A carried waiver
 * keeps its reason and approver and gets a visible note saying where it came from.
 */
import { randomUUID } from 'node:crypto';
import { z } from 'zod';
import type { Db } from '@/db/client';
import { findingEvents, findingReviews } from '@/db/schema';
import { can, rolesAllowedText, type TeamRole } from '@/lib/auth/permissions';
import { recordAudit } from '@/lib/data/audit';
import { ApiError } from '@/lib/http/errors';
import { getAnalysisView } from '@/lib/jobs/analyses';
import { compareFindings } from './compare';
import type { FindingItem } from './findings-query';
import { assertNotSignedOff, loadFindings } from './findings-store';

export const DEFAULT_COMPARE_TOLERANCE_UM = 1;

export const compareQuery = z.object({
  /** The earlier analysis to compare against. */
  with: z.string().min(1).max(64).regex(/^[A-Za-z0-9_-]+$/, 'Malformed id.'),
  toleranceUm: z.coerce.number().min(0).max(10_000).default(DEFAULT_COMPARE_TOLERANCE_UM),
});
export const carryBody = z.object({
  from: z.string().min(1).max(64).regex(/^[A-Za-z0-9_-]+$/, 'Malformed id.'),
  toleranceUm: z.number().min(0).max(10_000).default(DEFAULT_COMPARE_TOLERANCE_UM),
});

const brief = (f: FindingItem) => ({ id: f.id, key: f.key, kind: f.kind, severity: f.severity, atUm: f.atUm, message: f.message, status: f.status, waiver: f.waiver });

function label(db: Db, analysisId: string): string {
  const v = getAnalysisView(db, analysisId);
  return `${v.revision.layoutName} r${v.revision.revision} (analysis of ${v.createdAt.slice(0, 16).replace('T', ' ')} UTC)`;
}

/** `afterId` is the analysis being looked at, `beforeId` the earlier one; both must belong to one project. */
export function compareAnalyses(db: Db, afterId: string, beforeId: string, toleranceUm: number) {
  if (afterId === beforeId) throw new ApiError('bad_request', 'Choose two different analyses to compare.');
  const after = loadFindings(db, afterId);
  const before = loadFindings(db, beforeId);
  if (after.analysis.projectId !== before.analysis.projectId) throw new ApiError('not_found', 'Analysis not found in this project.');
  const toPoint = (f: FindingItem) => ({ key: f.key, kind: f.kind, xUm: f.atUm[0], yUm: f.atUm[1] });
  const r = compareFindings(before.items.map(toPoint), after.items.map(toPoint), toleranceUm);
  const a = new Map(after.items.map((f) => [f.key, f]));
  const b = new Map(before.items.map((f) => [f.key, f]));
  const unchanged = r.unchanged.map((p) => ({ before: brief(b.get(p.beforeKey) as FindingItem), after: brief(a.get(p.afterKey) as FindingItem), distanceUm: p.distanceUm }));
  return {
    before: { id: beforeId, label: label(db, beforeId) },
    after: { id: afterId, label: label(db, afterId) },
    toleranceUm,
    counts: { added: r.added.length, resolved: r.resolved.length, unchanged: r.unchanged.length },
    /** Unchanged findings whose earlier waiver is not yet on the later finding. */
    carriable: unchanged.filter((u) => u.before.status === 'waived' && u.after.status === 'open').length,
    added: r.added.map((k) => brief(a.get(k) as FindingItem)),
    resolved: r.resolved.map((k) => brief(b.get(k) as FindingItem)),
    unchanged,
  };
}

export function carryWaivers(db: Db, input: { afterId: string; beforeId: string; toleranceUm: number; teamId: string; actor: { id: string; name: string; role: TeamRole } }) {
  if (!can(input.actor.role, 'flag.waive')) throw new ApiError('forbidden', `This needs the ${rolesAllowedText('flag.waive')} role in this team.`);
  assertNotSignedOff(db, input.afterId);
  const cmp = compareAnalyses(db, input.afterId, input.beforeId, input.toleranceUm);
  const now = new Date();
  const todo = cmp.unchanged.filter((u) => u.before.status === 'waived' && u.after.status === 'open' && u.before.waiver);
  db.transaction((tx) => {
    for (const u of todo) {
      const w = u.before.waiver as NonNullable<FindingItem['waiver']>;
      const note =
        `Waiver carried over from ${cmp.before.label}, where the same ${u.before.kind} finding lay ${u.distanceUm.toFixed(2)} µm away ` +
        `(compare tolerance ${input.toleranceUm} µm); approved there by ${w.approverName} on ${w.at.slice(0, 10)}. Carried by ${input.actor.name}.`;
      const values = {
        status: 'waived' as const,
        waiverReason: w.reason,
        waiverApproverId: null,
        waiverApproverName: w.approverName,
        waivedAt: new Date(w.at),
        carriedFromAnalysisId: input.beforeId,
        carriedNote: note,
        updatedAt: now,
        updatedBy: input.actor.id,
      };
      tx.insert(findingReviews)
        .values({ analysisId: input.afterId, flagKey: u.after.key, ...values })
        .onConflictDoUpdate({ target: [findingReviews.analysisId, findingReviews.flagKey], set: values })
        .run();
      tx.insert(findingEvents)
        .values({ id: randomUUID(), analysisId: input.afterId, flagKey: u.after.key, type: 'carry', at: now, actorId: input.actor.id, actorName: input.actor.name, fromStatus: 'open', toStatus: 'waived', body: note, mentions: [] })
        .run();
    }
    if (todo.length) {
      recordAudit({ actorId: input.actor.id, teamId: input.teamId, action: 'flag.waive', target: `analysis:${input.afterId}`, detail: { carriedFrom: input.beforeId, findings: todo.length, toleranceUm: input.toleranceUm } });
    }
  });
  return { carried: todo.length };
}
