import { authenticateRequest, authorizeTeam } from '@/lib/auth/request-access';
import { createProjectBody, listProjectsQuery } from '@/lib/api/schemas';
import { createProject, listMyProjects } from '@/lib/data/projects';
import { toErrorResponse } from '@/lib/http/errors';

export const runtime = 'nodejs';
export const dynamic = 'force-dynamic';

/**
 * Projects of every team the caller belongs to, newest first, with the caller's role. A token sees only its own
 * team's projects; `?teamId=` narrows the list further.
 */
export async function GET(request: Request) {
  try {
    const { user, tokenTeamId } = await authenticateRequest(request);
    const { teamId } = listProjectsQuery.parse(Object.fromEntries(new URL(request.url).searchParams));
    const projects = (await listMyProjects(user)).filter(
      (p) => (tokenTeamId === null || p.teamId === tokenTeamId) && (teamId === undefined || p.teamId === teamId),
    );
    return Response.json({ projects });
  } catch (error) {
    return toErrorResponse(error);
  }
}

/** Create a project: `{ teamId, name, description? }` → 201 `{ project }` ('project.create'). */
export async function POST(request: Request) {
  try {
    const auth = await authenticateRequest(request);
    const input = createProjectBody.parse(await request.json());
    const access = await authorizeTeam(auth, input.teamId, 'project.create');
    const project = await createProject(access.teamId, { name: input.name, description: input.description }, access.user);
    return Response.json({ project }, { status: 201 });
  } catch (error) {
    return toErrorResponse(error);
  }
}
