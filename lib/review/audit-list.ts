/** Reading the audit log for the admin page: newest first, with actor names, optionally one action family. */
import { and, desc, eq, like, lt, type SQL } from 'drizzle-orm';
import type { Db } from '@/db/client';
import { auditLog, users } from '@/db/schema';

export function listAudit(db: Db, teamId: string, opts: { action?: string; before?: number; limit?: number } = {}) {
  const conds: SQL[] = [eq(auditLog.teamId, teamId)];
  if (opts.action) conds.push(like(auditLog.action, `${opts.action.replace(/[%_]/g, '')}%`));
  if (opts.before) conds.push(lt(auditLog.id, opts.before));
  return db
    .select({ id: auditLog.id, at: auditLog.at, action: auditLog.action, target: auditLog.target, detail: auditLog.detail, actorId: auditLog.actorId, actorName: users.name })
    .from(auditLog)
    .leftJoin(users, eq(users.id, auditLog.actorId))
    .where(and(...conds))
    .orderBy(desc(auditLog.id))
    .limit(opts.limit ?? 200)
    .all();
}
