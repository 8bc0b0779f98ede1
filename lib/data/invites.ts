import 'server-only';
import { and, desc, eq, gt, isNull } from 'drizzle-orm';
import { createHash, randomBytes } from 'node:crypto';
import type { z } from 'zod';
import { getDb } from '@/db/client';
import { invites, memberships, teams, users } from '@/db/schema';
import { requireTeamPermission } from '@/lib/auth/guard';
import { ROLE_LABEL, type TeamRole } from '@/lib/auth/permissions';
import type { AuthUser } from '@/lib/auth/session';
import { ApiError } from '@/lib/http/errors';
import { mailBaseUrl, PublicUrlError } from '@/lib/http/public-url';
import { sendMail } from '@/lib/mail/send';
import { recordAudit } from './audit';
import type { inviteInput } from './schemas';

const INVITE_LIFETIME_MS = 7 * 24 * 3600_000;

export type InviteDTO = { id: string; email: string; role: TeamRole; createdAt: string; expiresAt: string };
export type InviteView = { teamId: string; teamName: string; email: string; role: TeamRole; invitedBy: string | null };

function tokenHash(token: string): string {
  return createHash('sha256').update(token).digest('hex');
}

/**
 * Invites `email` to the team with `role` ('members.invite') and mails the link `<TRENCHANT_PUBLIC_URL>/invite/<token>`
 * (never built from the request's Host). Without a configured public URL in production nothing is stored or sent.
 * Re-inviting the same address replaces its pending invite. 409 when the address is already a member.
 */
export async function createInvite(
  teamId: string,
  input: z.infer<typeof inviteInput>,
  user?: AuthUser,
): Promise<InviteDTO> {
  const access = await requireTeamPermission(teamId, 'members.invite', user);
  let baseUrl: string;
  try {
    baseUrl = mailBaseUrl();
  } catch (error) {
    if (error instanceof PublicUrlError) throw new ApiError('internal', error.message);
    throw error;
  }
  const db = getDb();
  const team = db.select().from(teams).where(eq(teams.id, teamId)).get();
  if (!team) throw new ApiError('not_found', 'Team not found.');
  const existing = db
    .select({ id: users.id })
    .from(memberships)
    .innerJoin(users, eq(users.id, memberships.userId))
    .where(and(eq(memberships.teamId, teamId), eq(users.email, input.email)))
    .get();
  if (existing) {
    throw new ApiError('conflict', 'This person is already a member of the team.', {
      fieldErrors: { email: ['This person is already a member of the team.'] },
    });
  }
  const token = randomBytes(24).toString('base64url');
  const now = new Date();
  const row = { id: crypto.randomUUID(), teamId, email: input.email, role: input.role, tokenHash: tokenHash(token), invitedBy: access.user.id, createdAt: now, expiresAt: new Date(now.getTime() + INVITE_LIFETIME_MS) };
  db.transaction((tx) => {
    tx.delete(invites).where(and(eq(invites.teamId, teamId), eq(invites.email, input.email), isNull(invites.acceptedAt))).run();
    tx.insert(invites).values(row).run();
  });
  const link = `${baseUrl}/invite/${token}`;
  await sendMail({
    to: input.email,
    teamId,
    subject: `${access.user.name} invited you to ${team.name} on Trenchant`,
    text: [
      `${access.user.name} (${access.user.email}) invited you to join the team "${team.name}" on Trenchant`,
      `as ${ROLE_LABEL[input.role].toLowerCase()}.`,
      '',
      `Accept the invitation: ${link}`,
      '',
      `The link works once and expires on ${row.expiresAt.toUTCString()}.`,
    ].join('\n'),
  });
  recordAudit({ actorId: access.user.id, teamId, action: 'members.invite', target: input.email, detail: { role: input.role } });
  return { id: row.id, email: row.email, role: row.role, createdAt: row.createdAt.toISOString(), expiresAt: row.expiresAt.toISOString() };
}

/** Pending invites of a team ('members.invite'). */
export async function listPendingInvites(teamId: string, user?: AuthUser): Promise<InviteDTO[]> {
  await requireTeamPermission(teamId, 'members.invite', user);
  return getDb()
    .select()
    .from(invites)
    .where(and(eq(invites.teamId, teamId), isNull(invites.acceptedAt), gt(invites.expiresAt, new Date())))
    .orderBy(desc(invites.createdAt))
    .all()
    .map((r) => ({ id: r.id, email: r.email, role: r.role, createdAt: r.createdAt.toISOString(), expiresAt: r.expiresAt.toISOString() }));
}

/**
 * Cancels a pending invitation of the team ('members.invite'): the row is deleted, so its link stops working at
 * once (the invite page and accepting both answer "unknown, already used or expired"). 404 when there is no such
 * pending invitation.
 */
export async function cancelInvite(teamId: string, inviteId: string, user?: AuthUser): Promise<void> {
  const access = await requireTeamPermission(teamId, 'members.invite', user);
  const db = getDb();
  const row = db
    .select({ email: invites.email })
    .from(invites)
    .where(and(eq(invites.id, inviteId), eq(invites.teamId, teamId), isNull(invites.acceptedAt)))
    .get();
  if (!row) throw new ApiError('not_found', 'No such pending invitation in this team.');
  db.delete(invites).where(and(eq(invites.id, inviteId), eq(invites.teamId, teamId), isNull(invites.acceptedAt))).run();
  recordAudit({ actorId: access.user.id, teamId, action: 'members.invite', target: row.email, detail: { cancelled: inviteId } });
}

/** The pending, unexpired invite behind a token, or null. Needs no session (the token is the credential). */
export function findInvite(token: string): (InviteView & { id: string }) | null {
  const row = getDb()
    .select({ id: invites.id, teamId: invites.teamId, teamName: teams.name, email: invites.email, role: invites.role, invitedBy: users.name })
    .from(invites)
    .innerJoin(teams, eq(teams.id, invites.teamId))
    .leftJoin(users, eq(users.id, invites.invitedBy))
    .where(and(eq(invites.tokenHash, tokenHash(token)), isNull(invites.acceptedAt), gt(invites.expiresAt, new Date())))
    .get();
  return row ?? null;
}

/**
 * Adds `user` to the invite's team with the invited role and marks the invite used. The account's e-mail must
 * be the invited address (403 otherwise); 404 for unknown, used or expired tokens.
 */
export function acceptInvite(token: string, user: AuthUser): { teamId: string; role: TeamRole } {
  const invite = findInvite(token);
  if (!invite) throw new ApiError('not_found', 'This invitation is unknown, already used or expired.');
  if (invite.email !== user.email) {
    throw new ApiError('forbidden', `This invitation is for ${invite.email}; you are signed in as ${user.email}.`);
  }
  const now = new Date();
  getDb().transaction((tx) => {
    tx.insert(memberships)
      .values({ teamId: invite.teamId, userId: user.id, role: invite.role, createdAt: now })
      .onConflictDoUpdate({ target: [memberships.teamId, memberships.userId], set: { role: invite.role } })
      .run();
    tx.update(invites).set({ acceptedAt: now }).where(eq(invites.id, invite.id)).run();
  });
  recordAudit({ actorId: user.id, teamId: invite.teamId, action: 'members.join', target: user.id, detail: { role: invite.role } });
  return { teamId: invite.teamId, role: invite.role };
}
