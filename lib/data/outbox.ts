import 'server-only';
import { desc, eq } from 'drizzle-orm';
import { getDb } from '@/db/client';
import { outbox } from '@/db/schema';
import { requireTeamPermission } from '@/lib/auth/guard';
import type { AuthUser } from '@/lib/auth/session';

export type OutboxMessageDTO = { id: number; receivedAt: string; from: string; to: string; subject: string; body: string };

/** Mail the development SMTP server received for this team, newest first ('outbox.view'). */
export async function listOutbox(teamId: string, user?: AuthUser, limit = 100): Promise<OutboxMessageDTO[]> {
  await requireTeamPermission(teamId, 'outbox.view', user);
  return getDb()
    .select()
    .from(outbox)
    .where(eq(outbox.teamId, teamId))
    .orderBy(desc(outbox.receivedAt), desc(outbox.id))
    .limit(limit)
    .all()
    .map((r) => ({ id: r.id, receivedAt: r.receivedAt.toISOString(), from: r.fromAddress, to: r.toAddresses, subject: r.subject, body: r.body }));
}

/** Whether mail goes to the built-in catcher (true) or a real SMTP server from SMTP_URL (false). */
export function usingDevelopmentMail(): boolean {
  return !process.env.SMTP_URL;
}
