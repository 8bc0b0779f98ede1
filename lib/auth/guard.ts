import 'server-only';
import { and, eq } from 'drizzle-orm';
import { getDb } from '@/db/client';
import { memberships, projects, type ProjectRow } from '@/db/schema';
import { ApiError } from '@/lib/http/errors';
import { can, rolesAllowedText, type TeamAction, type TeamRole } from './permissions';
import { requireUser, type AuthUser } from './session';

/** What a passed check hands back: who, in which team, with which role. */
export type TeamAccess = { user: AuthUser; teamId: string; role: TeamRole };

/** The user's role in the team, or null when not a member. */
export function teamRoleOf(userId: string, teamId: string): TeamRole | null {
  const row = getDb()
    .select({ role: memberships.role })
    .from(memberships)
    .where(and(eq(memberships.teamId, teamId), eq(memberships.userId, userId)))
    .get();
  return row?.role ?? null;
}

/**
 * The signed-in user must belong to `teamId`. Throws ApiError 401 without a session, 403 for non-members.
 * `user` may be passed by callers that authenticated another way (e.g. a Bearer token); otherwise the
 * session cookie is used.
 */
export async function requireTeamMember(teamId: string, user?: AuthUser): Promise<TeamAccess> {
  const who = user ?? (await requireUser());
  const role = teamRoleOf(who.id, teamId);
  if (!role) throw new ApiError('forbidden', 'You are not a member of this team.');
  return { user: who, teamId, role };
}

/**
 * The one authorisation check of the app: the signed-in user must hold a role in `teamId` that the permission
 * table (lib/auth/permissions.ts) allows for `action`. Throws ApiError 401 / 403.
 */
export async function requireTeamPermission(teamId: string, action: TeamAction, user?: AuthUser): Promise<TeamAccess> {
  const access = await requireTeamMember(teamId, user);
  if (!can(access.role, action)) {
    throw new ApiError('forbidden', `This needs the ${rolesAllowedText(action)} role in this team.`);
  }
  return access;
}

/**
 * Same check for a project: finds the project's team, then applies `requireTeamPermission`. Unknown projects
 * and projects of teams the user is not in both answer 404, so ids of other teams' projects are not revealed.
 */
export async function requireProjectPermission(
  projectId: string,
  action: TeamAction | 'project.read',
  user?: AuthUser,
): Promise<TeamAccess & { project: ProjectRow }> {
  const who = user ?? (await requireUser());
  const project = getDb().select().from(projects).where(eq(projects.id, projectId)).get();
  if (!project || !teamRoleOf(who.id, project.teamId)) throw new ApiError('not_found', 'Project not found.');
  const access =
    action === 'project.read'
      ? await requireTeamMember(project.teamId, who)
      : await requireTeamPermission(project.teamId, action, who);
  return { ...access, project };
}
