/** A user's in-app notifications and e-mail settings. */
import { and, desc, eq, inArray, isNull } from 'drizzle-orm';
import { z } from 'zod';
import type { Db } from '@/db/client';
import { analyses, layoutRevisions, layouts, notificationPrefs, notifications, projects } from '@/db/schema';
import { unreadCount } from './notify';

export const readBody = z.union([z.object({ ids: z.array(z.string().min(1).max(64)).min(1).max(500) }), z.object({ all: z.literal(true) })]);
export const prefsBody = z.object({ emailAssignment: z.boolean(), emailMention: z.boolean(), emailStatus: z.boolean() });
export type NotificationPrefs = z.infer<typeof prefsBody>;

export function listNotifications(db: Db, userId: string, limit = 100) {
  const rows = db
    .select({ n: notifications, projectName: projects.name, layoutName: layouts.name, revision: layoutRevisions.revision })
    .from(notifications)
    .leftJoin(analyses, eq(analyses.id, notifications.analysisId))
    .leftJoin(projects, eq(projects.id, analyses.projectId))
    .leftJoin(layoutRevisions, eq(layoutRevisions.id, analyses.revisionId))
    .leftJoin(layouts, eq(layouts.id, layoutRevisions.layoutId))
    .where(eq(notifications.userId, userId))
    .orderBy(desc(notifications.at))
    .limit(limit)
    .all();
  return {
    unread: unreadCount(db, userId),
    items: rows.map(({ n, projectName, layoutName, revision }) => ({
      id: n.id,
      kind: n.kind,
      at: n.at.toISOString(),
      actorName: n.actorName,
      title: n.title,
      body: n.body,
      read: n.readAt !== null,
      // Which project and layout the finding is in: a finding key alone does not say, once there are several.
      context: projectName ? `${projectName}${layoutName ? ` · ${layoutName} r${revision ?? '?'}` : ''}` : null,
      href: n.analysisId ? `/analyses/${n.analysisId}${n.flagKey ? `?finding=${encodeURIComponent(n.flagKey)}` : ''}` : null,
    })),
  };
}

export function markRead(db: Db, userId: string, body: z.infer<typeof readBody>): number {
  const where = 'ids' in body ? and(eq(notifications.userId, userId), isNull(notifications.readAt), inArray(notifications.id, body.ids)) : and(eq(notifications.userId, userId), isNull(notifications.readAt));
  return db.update(notifications).set({ readAt: new Date() }).where(where).run().changes;
}

export function getPrefs(db: Db, userId: string): NotificationPrefs {
  const p = db.select().from(notificationPrefs).where(eq(notificationPrefs.userId, userId)).get();
  return { emailAssignment: p?.emailAssignment ?? true, emailMention: p?.emailMention ?? true, emailStatus: p?.emailStatus ?? true };
}

export function setPrefs(db: Db, userId: string, prefs: NotificationPrefs): NotificationPrefs {
  const values = { ...prefs, updatedAt: new Date() };
  db.insert(notificationPrefs).values({ userId, ...values }).onConflictDoUpdate({ target: notificationPrefs.userId, set: values }).run();
  return getPrefs(db, userId);
}
