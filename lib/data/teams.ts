import 'server-only';
import { and, asc, count, eq, isNull } from 'drizzle-orm';
import type { z } from 'zod';
import { getDb } from '@/db/client';
import { apiTokens, memberships, teams, users } from '@/db/schema';
import { requireTeamMember, requireTeamPermission } from '@/lib/auth/guard';
import type { TeamRole } from '@/lib/auth/permissions';
import { requireUser, type AuthUser } from '@/lib/auth/session';
import { ApiError } from '@/lib/http/errors';
import { recordAudit } from './audit';
import type { roleChangeInput, teamUpdateInput } from './schemas';

export type TeamSummary = { id: string; name: string; myRole: TeamRole; memberCount: number };
export type MemberDTO = { userId: string; name: string; email: string; role: TeamRole; joinedAt: string };

/** Teams of the signed-in user with their role, by name. */
export async function listMyTeams(user?: AuthUser): Promise<TeamSummary[]> {
  const who = user ?? (await requireUser());
  const db = getDb();
  const rows = db
    .select({ id: teams.id, name: teams.name, myRole: memberships.role })
    .from(memberships)
    .innerJoin(teams, eq(teams.id, memberships.teamId))
    .where(eq(memberships.userId, who.id))
    .orderBy(asc(teams.name))
    .all();
  return rows.map((r) => ({
    ...r,
    memberCount: db.select({ n: count() }).from(memberships).where(eq(memberships.teamId, r.id)).get()?.n ?? 0,
  }));
}

/** Team name, the caller's role and the member list (members only). */
export async function getTeamOverview(
  teamId: string,
  user?: AuthUser,
): Promise<{ id: string; name: string; myRole: TeamRole; members: MemberDTO[] }> {
  const access = await requireTeamMember(teamId, user);
  const db = getDb();
  const team = db.select().from(teams).where(eq(teams.id, teamId)).get();
  if (!team) throw new ApiError('not_found', 'Team not found.');
  const members = db
    .select({ userId: users.id, name: users.name, email: users.email, role: memberships.role, joined: memberships.createdAt })
    .from(memberships)
    .innerJoin(users, eq(users.id, memberships.userId))
    .where(eq(memberships.teamId, teamId))
    .orderBy(asc(users.name))
    .all()
    .map(({ joined, ...m }) => ({ ...m, joinedAt: joined.toISOString() }));
  return { id: team.id, name: team.name, myRole: access.role, members };
}

/** Renames the team ('team.manage'). */
export async function renameTeam(teamId: string, input: z.infer<typeof teamUpdateInput>, user?: AuthUser): Promise<void> {
  const access = await requireTeamPermission(teamId, 'team.manage', user);
  getDb().update(teams).set({ name: input.name }).where(eq(teams.id, teamId)).run();
  recordAudit({ actorId: access.user.id, teamId, action: 'team.manage', target: teamId, detail: { rename: input.name } });
}

/** Changes a member's role ('team.manage'). A team always keeps at least one admin (409). */
export async function changeMemberRole(
  teamId: string,
  memberId: string,
  input: z.infer<typeof roleChangeInput>,
  user?: AuthUser,
): Promise<void> {
  const access = await requireTeamPermission(teamId, 'team.manage', user);
  const db = getDb();
  db.transaction((tx) => {
    const current = tx
      .select({ role: memberships.role })
      .from(memberships)
      .where(and(eq(memberships.teamId, teamId), eq(memberships.userId, memberId)))
      .get();
    if (!current) throw new ApiError('not_found', 'This person is not a member of the team.');
    if (current.role === 'admin' && input.role !== 'admin' && adminCount(tx, teamId) <= 1) {
      throw new ApiError('conflict', 'A team needs at least one admin; make someone else admin first.');
    }
    tx.update(memberships)
      .set({ role: input.role })
      .where(and(eq(memberships.teamId, teamId), eq(memberships.userId, memberId)))
      .run();
  });
  recordAudit({ actorId: access.user.id, teamId, action: 'team.manage', target: memberId, detail: { role: input.role } });
}

/**
 * Removes a member ('team.manage') and revokes every API token they hold for this team, in one transaction: a
 * later re-invitation gives them a new membership but never brings an old token back. The last admin cannot
 * be removed (409).
 */
export async function removeMember(teamId: string, memberId: string, user?: AuthUser): Promise<void> {
  const access = await requireTeamPermission(teamId, 'team.manage', user);
  let revoked = 0;
  getDb().transaction((tx) => {
    const current = tx
      .select({ role: memberships.role })
      .from(memberships)
      .where(and(eq(memberships.teamId, teamId), eq(memberships.userId, memberId)))
      .get();
    if (!current) throw new ApiError('not_found', 'This person is not a member of the team.');
    if (current.role === 'admin' && adminCount(tx, teamId) <= 1) {
      throw new ApiError('conflict', 'A team needs at least one admin.');
    }
    tx.delete(memberships).where(and(eq(memberships.teamId, teamId), eq(memberships.userId, memberId))).run();
    revoked = tx
      .update(apiTokens)
      .set({ revokedAt: new Date() })
      .where(and(eq(apiTokens.teamId, teamId), eq(apiTokens.userId, memberId), isNull(apiTokens.revokedAt)))
      .run().changes;
  });
  recordAudit({ actorId: access.user.id, teamId, action: 'team.manage', target: memberId, detail: { removed: true, tokensRevoked: revoked } });
}

type Tx = Parameters<Parameters<ReturnType<typeof getDb>['transaction']>[0]>[0];

function adminCount(tx: Tx, teamId: string): number {
  return (
    tx
      .select({ n: count() })
      .from(memberships)
      .where(and(eq(memberships.teamId, teamId), eq(memberships.role, 'admin')))
      .get()?.n ?? 0
  );
}
