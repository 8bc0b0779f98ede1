import { getDb } from '@/db/client';
import { auditLog } from '@/db/schema';

export type AuditEntry = {
  actorId: string | null;
  teamId?: string | null;
  /** a permission name (e.g. 'project.create') or a dotted verb ('auth.sign_in_failed') */
  action: string;
  target?: string | null;
  detail?: Record<string, unknown>;
};

/** Appends one row to the audit log. Synchronous (better-sqlite3), so it can sit inside a transaction. */
export function recordAudit(entry: AuditEntry): void {
  getDb()
    .insert(auditLog)
    .values({
      at: new Date(),
      actorId: entry.actorId,
      teamId: entry.teamId ?? null,
      action: entry.action,
      target: entry.target ?? null,
      detail: entry.detail ?? null,
    })
    .run();
}
