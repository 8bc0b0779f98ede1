import 'server-only';
import { and, desc, eq, inArray } from 'drizzle-orm';
import type { z } from 'zod';
import { getDb } from '@/db/client';
import { memberships, projects, teams, users } from '@/db/schema';
import { requireProjectPermission, requireTeamMember, requireTeamPermission } from '@/lib/auth/guard';
import type { TeamRole } from '@/lib/auth/permissions';
import { requireUser, type AuthUser } from '@/lib/auth/session';
import { ApiError } from '@/lib/http/errors';
import { recordAudit } from './audit';
import type { projectInput } from './schemas';

/** What pages and the API show of a project. */
export type ProjectDTO = {
  id: string;
  teamId: string;
  teamName: string;
  name: string;
  description: string;
  createdByName: string | null;
  createdAt: string;
};

/** Projects of every team the signed-in user belongs to, newest first, with the user's role there. */
export async function listMyProjects(user?: AuthUser): Promise<(ProjectDTO & { myRole: TeamRole })[]> {
  const who = user ?? (await requireUser());
  const mine = getDb()
    .select({ teamId: memberships.teamId, role: memberships.role })
    .from(memberships)
    .where(eq(memberships.userId, who.id))
    .all();
  if (mine.length === 0) return [];
  const roleByTeam = new Map(mine.map((m) => [m.teamId, m.role]));
  const rows = selectProjects()
    .where(inArray(projects.teamId, [...roleByTeam.keys()]))
    .orderBy(desc(projects.createdAt))
    .all();
  return rows.map((r) => ({ ...toDTO(r), myRole: roleByTeam.get(r.teamId) ?? 'reviewer' }));
}

/** Projects of one team (member only). */
export async function listTeamProjects(teamId: string, user?: AuthUser): Promise<ProjectDTO[]> {
  await requireTeamMember(teamId, user);
  return selectProjects().where(eq(projects.teamId, teamId)).orderBy(desc(projects.createdAt)).all().map(toDTO);
}

/** One project (members of its team only; 404 otherwise). */
export async function getProject(projectId: string, user?: AuthUser): Promise<ProjectDTO & { myRole: TeamRole }> {
  const access = await requireProjectPermission(projectId, 'project.read', user);
  const row = selectProjects().where(eq(projects.id, projectId)).get();
  if (!row) throw new ApiError('not_found', 'Project not found.');
  return { ...toDTO(row), myRole: access.role };
}

/** Creates a project in `teamId` ('project.create'). Names are unique within a team (409, field `name`). */
export async function createProject(
  teamId: string,
  input: z.infer<typeof projectInput>,
  user?: AuthUser,
): Promise<ProjectDTO> {
  const access = await requireTeamPermission(teamId, 'project.create', user);
  const db = getDb();
  const clash = db
    .select({ id: projects.id })
    .from(projects)
    .where(and(eq(projects.teamId, teamId), eq(projects.name, input.name)))
    .get();
  if (clash) {
    throw new ApiError('conflict', 'This team already has a project with that name.', {
      fieldErrors: { name: ['This team already has a project with that name.'] },
    });
  }
  const id = crypto.randomUUID();
  db.insert(projects)
    .values({ id, teamId, name: input.name, description: input.description, createdBy: access.user.id, createdAt: new Date() })
    .run();
  recordAudit({ actorId: access.user.id, teamId, action: 'project.create', target: id, detail: { name: input.name } });
  const row = selectProjects().where(eq(projects.id, id)).get();
  if (!row) throw new ApiError('internal');
  return toDTO(row);
}

function selectProjects() {
  return getDb()
    .select({
      id: projects.id,
      teamId: projects.teamId,
      teamName: teams.name,
      name: projects.name,
      description: projects.description,
      createdByName: users.name,
      createdAt: projects.createdAt,
    })
    .from(projects)
    .innerJoin(teams, eq(teams.id, projects.teamId))
    .leftJoin(users, eq(users.id, projects.createdBy))
    .$dynamic();
}

function toDTO(r: {
  id: string;
  teamId: string;
  teamName: string;
  name: string;
  description: string;
  createdByName: string | null;
  createdAt: Date;
}): ProjectDTO {
  return { ...r, createdAt: r.createdAt.toISOString() };
}
