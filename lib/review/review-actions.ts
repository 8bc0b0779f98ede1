/**
 * Changing the review of findings: status (with the waiver rules), assignment and comments. Every change writes
 * the finding's thread, the audit log and the notifications in one transaction; e-mails are returned for the
 * caller to send afterwards. Role checks happen here too (the route has authenticated and found the role).
 */
import { randomUUID } from 'node:crypto';
import { and, eq, inArray } from 'drizzle-orm';
import { z } from 'zod';
import type { Db } from '@/db/client';
import { analysisFlags, findingEvents, findingReviews, type FindingStatus } from '@/db/schema';
import { can, rolesAllowedText, type TeamRole } from '@/lib/auth/permissions';
import { recordAudit } from '@/lib/data/audit';
import { ApiError } from '@/lib/http/errors';
import { assertNotSignedOff, finishedAnalysisRow, findingByRowId, teamMembersOf } from './findings-store';
import { mentionedUserIds } from './mentions';
import { recordNotifications } from './notify';
import { FINDING_STATUSES, STATUS_LABEL, STATUS_PERMISSION, statusChangeProblem } from './statuses';

export type Actor = { id: string; name: string; role: TeamRole };
type Mail = ReturnType<typeof recordNotifications>[number];

export const MAX_COMMENT = 4000;
export const commentBody = z.object({
  body: z.string().trim().min(1, 'Write a comment first.').max(MAX_COMMENT, `Keep a comment under ${MAX_COMMENT} characters.`),
});

export const changeBody = z
  .object({
    /** Finding keys (analysis_flags.flag_key). */
    keys: z.array(z.string().min(1).max(200)).max(100_000).default([]),
    /** Group ids from the grouped list; a group acts on all its members. */
    groupIds: z.array(z.string().min(1).max(300)).max(1000).default([]),
    status: z.enum(FINDING_STATUSES).optional(),
    /** A team member's id, or null to unassign. */
    assigneeId: z.string().min(1).max(64).nullable().optional(),
    reason: z.string().max(MAX_COMMENT).optional(),
  })
  .refine((b) => b.status !== undefined || b.assigneeId !== undefined, { message: 'Give a status, an assignee, or both.', path: ['status'] })
  .refine((b) => b.keys.length + b.groupIds.length > 0, { message: 'Choose at least one finding or group.', path: ['keys'] });
export type ChangeBody = z.infer<typeof changeBody>;

function requireRole(actor: Actor, action: Parameters<typeof can>[1]): void {
  if (!can(actor.role, action)) throw new ApiError('forbidden', `This needs the ${rolesAllowedText(action)} role in this team.`);
}

/** People involved in a finding: its assignee, whoever ran the analysis, and everyone in its thread. */
function involved(db: Db, analysisId: string, keys: readonly string[], createdBy: string | null): string[] {
  const ids = new Set<string>();
  if (createdBy) ids.add(createdBy);
  for (let i = 0; i < keys.length; i += 500) {
    const chunk = keys.slice(i, i + 500);
    for (const r of db.select({ a: findingReviews.assigneeId }).from(findingReviews).where(and(eq(findingReviews.analysisId, analysisId), inArray(findingReviews.flagKey, chunk))).all()) if (r.a) ids.add(r.a);
    for (const e of db.select({ a: findingEvents.actorId }).from(findingEvents).where(and(eq(findingEvents.analysisId, analysisId), inArray(findingEvents.flagKey, chunk))).all()) if (e.a) ids.add(e.a);
  }
  return [...ids];
}

/**
 * Applies a status and/or assignment to findings. `keys` must already include the members of any groups. Returns
 * how many findings changed and the e-mails to send.
 */
export function changeFindings(
  db: Db,
  input: { analysisId: string; teamId: string; actor: Actor; keys: readonly string[]; status?: FindingStatus; assigneeId?: string | null; reason?: string; link: string },
): { changed: number; mails: Mail[] } {
  const analysis = finishedAnalysisRow(db, input.analysisId);
  assertNotSignedOff(db, input.analysisId);
  const { status, assigneeId } = input;
  if (status !== undefined) {
    requireRole(input.actor, STATUS_PERMISSION[status]);
    const problem = statusChangeProblem(status, input.reason);
    if (problem) throw new ApiError('unprocessable', problem, { fieldErrors: { reason: [problem] } });
  }
  const members = teamMembersOf(db, input.teamId);
  let assigneeName: string | null = null;
  if (assigneeId !== undefined) {
    requireRole(input.actor, 'flag.triage');
    if (assigneeId !== null) {
      const m = members.find((x) => x.id === assigneeId);
      if (!m) throw new ApiError('unprocessable', 'The assignee must be a member of this team.', { fieldErrors: { assigneeId: ['not a team member'] } });
      assigneeName = m.name;
    }
  }
  const existing = new Set(db.select({ k: analysisFlags.flagKey }).from(analysisFlags).where(eq(analysisFlags.analysisId, input.analysisId)).all().map((r) => r.k));
  const keys = [...new Set(input.keys)];
  const unknown = keys.filter((k) => !existing.has(k));
  if (unknown.length) throw new ApiError('not_found', `No finding ${unknown.slice(0, 3).join(', ')}${unknown.length > 3 ? ` (and ${unknown.length - 3} more)` : ''} in this analysis.`);
  const reason = input.reason?.replace(/\s+$/g, '').trim() ?? '';
  const now = new Date();
  const mails: Mail[] = [];

  const changed = db.transaction((tx) => {
    const current = new Map<string, typeof findingReviews.$inferSelect>();
    for (let i = 0; i < keys.length; i += 500) {
      for (const r of tx.select().from(findingReviews).where(and(eq(findingReviews.analysisId, input.analysisId), inArray(findingReviews.flagKey, keys.slice(i, i + 500)))).all()) current.set(r.flagKey, r);
    }
    let n = 0;
    const statusChanged: string[] = [];
    const assigned: string[] = [];
    for (const key of keys) {
      const before = current.get(key);
      const fromStatus: FindingStatus = before?.status ?? 'open';
      const fromAssignee = before?.assigneeId ?? null;
      const nextStatus = status ?? fromStatus;
      const nextAssignee = assigneeId === undefined ? fromAssignee : assigneeId;
      const statusDiff = status !== undefined && (status !== fromStatus || (status === 'waived' && reason !== (before?.waiverReason ?? '')));
      const assignDiff = nextAssignee !== fromAssignee;
      if (!statusDiff && !assignDiff) continue;
      n++;
      const waiver =
        status === 'waived' && statusDiff
          ? { waiverReason: reason, waiverApproverId: input.actor.id, waiverApproverName: input.actor.name, waivedAt: now, carriedFromAnalysisId: null, carriedNote: null }
          : {};
      tx.insert(findingReviews)
        .values({ analysisId: input.analysisId, flagKey: key, status: nextStatus, assigneeId: nextAssignee, updatedAt: now, updatedBy: input.actor.id, ...waiver })
        .onConflictDoUpdate({ target: [findingReviews.analysisId, findingReviews.flagKey], set: { status: nextStatus, assigneeId: nextAssignee, updatedAt: now, updatedBy: input.actor.id, ...waiver } })
        .run();
      const base = { analysisId: input.analysisId, flagKey: key, at: now, actorId: input.actor.id, actorName: input.actor.name, mentions: [] };
      if (statusDiff) {
        statusChanged.push(key);
        tx.insert(findingEvents).values({ ...base, id: randomUUID(), type: 'status', fromStatus, toStatus: nextStatus, body: reason }).run();
      }
      if (assignDiff) {
        assigned.push(key);
        tx.insert(findingEvents).values({ ...base, id: randomUUID(), type: 'assign', assigneeId: nextAssignee, assigneeName: assigneeName ?? '(unassigned)' }).run();
      }
    }
    if (n === 0) return 0;
    recordAudit({
      actorId: input.actor.id,
      teamId: input.teamId,
      action: status === 'waived' ? 'flag.waive' : status === 'verified' ? 'flag.verify' : 'flag.triage',
      target: `analysis:${input.analysisId}`,
      detail: { findings: n, keys: keys.slice(0, 20), status: status ?? null, assigneeId: assigneeId ?? null, reason: reason || null },
    });
    const what = (list: string[]) => (list.length === 1 ? `finding ${list[0]}` : `${list.length} findings`);
    if (statusChanged.length && status) {
      mails.push(
        ...recordNotifications(db, {
          kind: 'status',
          recipientIds: involved(db, input.analysisId, statusChanged, analysis.createdBy),
          actor: input.actor,
          teamId: input.teamId,
          analysisId: input.analysisId,
          flagKey: statusChanged.length === 1 ? (statusChanged[0] as string) : null,
          title: `${input.actor.name} set ${what(statusChanged)} to "${STATUS_LABEL[status]}"`,
          body: reason ? `Reason: ${reason}` : '',
          link: input.link,
        }),
      );
    }
    if (assigned.length && assigneeId) {
      mails.push(
        ...recordNotifications(db, {
          kind: 'assignment',
          recipientIds: [assigneeId],
          actor: input.actor,
          teamId: input.teamId,
          analysisId: input.analysisId,
          flagKey: assigned.length === 1 ? (assigned[0] as string) : null,
          title: `${input.actor.name} assigned ${what(assigned)} to you`,
          body: '',
          link: input.link,
        }),
      );
    }
    return n;
  });
  return { changed, mails };
}

/** Adds a comment to a finding's thread; mentioned team members are notified. */
export function addComment(
  db: Db,
  input: { analysisId: string; teamId: string; findingId: string; actor: Actor; body: string; link: string },
): { eventId: string; mentions: string[]; mails: Mail[] } {
  finishedAnalysisRow(db, input.analysisId);
  requireRole(input.actor, 'flag.comment');
  assertNotSignedOff(db, input.analysisId);
  const flag = findingByRowId(db, input.analysisId, input.findingId);
  const mentions = mentionedUserIds(input.body, teamMembersOf(db, input.teamId));
  const eventId = randomUUID();
  const mails = db.transaction((tx) => {
    tx.insert(findingEvents)
      .values({ id: eventId, analysisId: input.analysisId, flagKey: flag.flagKey, type: 'comment', at: new Date(), actorId: input.actor.id, actorName: input.actor.name, body: input.body, mentions })
      .run();
    recordAudit({ actorId: input.actor.id, teamId: input.teamId, action: 'flag.comment', target: `finding:${input.analysisId}/${flag.flagKey}`, detail: { mentions } });
    const excerpt = input.body.length > 400 ? `${input.body.slice(0, 400)}…` : input.body;
    return recordNotifications(db, {
      kind: 'mention',
      recipientIds: mentions,
      actor: input.actor,
      teamId: input.teamId,
      analysisId: input.analysisId,
      flagKey: flag.flagKey,
      title: `${input.actor.name} mentioned you on finding ${flag.flagKey}`,
      body: excerpt,
      link: input.link,
    });
  });
  return { eventId, mentions, mails };
}

/** The finding with its whole thread, oldest first. */
export function findingThread(db: Db, analysisId: string, findingId: string) {
  const flag = findingByRowId(db, analysisId, findingId);
  const events = db
    .select()
    .from(findingEvents)
    .where(and(eq(findingEvents.analysisId, analysisId), eq(findingEvents.flagKey, flag.flagKey)))
    .orderBy(findingEvents.at)
    .all()
    .map((e) => ({
      id: e.id,
      type: e.type,
      at: e.at.toISOString(),
      actorName: e.actorName,
      fromStatus: e.fromStatus,
      toStatus: e.toStatus,
      assigneeName: e.assigneeName,
      body: e.body,
      mentions: e.mentions,
    }));
  return { findingId: flag.id, key: flag.flagKey, events };
}
