/**
 * Notifications of review events: one in-app row per recipient, and an e-mail (lib/mail: a real SMTP server
 * from SMTP_URL, else the built-in mail catcher) unless the recipient opted out of that kind. The actor is never
 * notified of their own action. Mail failures are logged and do not undo the action.
 */
import { randomUUID } from 'node:crypto';
import { and, count, eq, inArray, isNull } from 'drizzle-orm';
import type { Db } from '@/db/client';
import { analyses, layoutRevisions, layouts, notificationPrefs, notifications, projects, users, type NotificationKind } from '@/db/schema';
import { sendMail } from '@/lib/mail/send';

export type NotificationInput = {
  kind: NotificationKind;
  recipientIds: readonly string[];
  actor: { id: string; name: string };
  teamId: string;
  analysisId: string;
  flagKey: string | null;
  title: string;
  body: string;
  /** Absolute or site-relative link to the finding, put in the mail. */
  link: string;
};

const PREF_FIELD = { assignment: 'emailAssignment', mention: 'emailMention', status: 'emailStatus' } as const;

/** "Project · Layout rN" of an analysis: a finding key alone does not say which die a mail is about. */
export function analysisContext(db: Db, analysisId: string): string | null {
  const r = db
    .select({ project: projects.name, layout: layouts.name, revision: layoutRevisions.revision })
    .from(analyses)
    .innerJoin(projects, eq(projects.id, analyses.projectId))
    .innerJoin(layoutRevisions, eq(layoutRevisions.id, analyses.revisionId))
    .innerJoin(layouts, eq(layouts.id, layoutRevisions.layoutId))
    .where(eq(analyses.id, analysisId))
    .get();
  return r ? `${r.project} · ${r.layout} r${r.revision}` : null;
}

/** Stores the in-app rows now; returns the mails to send (so callers can send them after their transaction). */
export function recordNotifications(db: Db, n: NotificationInput): { to: string; subject: string; text: string; teamId: string }[] {
  const ids = [...new Set(n.recipientIds)].filter((id) => id !== n.actor.id);
  if (ids.length === 0) return [];
  const at = new Date();
  const people = db.select({ id: users.id, email: users.email }).from(users).where(inArray(users.id, ids)).all();
  const prefs = new Map(db.select().from(notificationPrefs).where(inArray(notificationPrefs.userId, ids)).all().map((p) => [p.userId, p]));
  const mails: { to: string; subject: string; text: string; teamId: string }[] = [];
  const context = people.length ? analysisContext(db, n.analysisId) : null;
  const head = context ? [n.title, context] : [n.title];
  const text = [...head, '', ...(n.body ? [n.body, ''] : []), `Open: ${n.link}`, '', 'You get this because you are involved in this finding. Turn these e-mails off under Notifications → E-mail settings.'].join('\n');
  for (const p of people) {
    db.insert(notifications)
      .values({ id: randomUUID(), userId: p.id, teamId: n.teamId, kind: n.kind, at, actorName: n.actor.name, analysisId: n.analysisId, flagKey: n.flagKey, title: n.title, body: n.body })
      .run();
    const pref = prefs.get(p.id);
    if (pref && !pref[PREF_FIELD[n.kind]]) continue;
    mails.push({
      to: p.email,
      subject: `[Trenchant] ${n.title}`,
      text,
      teamId: n.teamId,
    });
  }
  return mails;
}

export async function deliver(mails: readonly { to: string; subject: string; text: string; teamId: string }[]): Promise<void> {
  const results = await Promise.allSettled(mails.map((m) => sendMail(m)));
  for (const r of results) if (r.status === 'rejected') console.error('[trenchant] notification mail failed:', r.reason);
}

export function unreadCount(db: Db, userId: string): number {
  return db.select({ n: count() }).from(notifications).where(and(eq(notifications.userId, userId), isNull(notifications.readAt))).get()?.n ?? 0;
}
