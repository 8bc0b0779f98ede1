import { requireTeamAccess } from '@/lib/auth/request-access';
import { createProject, listTeamProjects } from '@/lib/data/projects';
import { idParam, projectInput } from '@/lib/data/schemas';
import { toErrorResponse } from '@/lib/http/errors';

export const runtime = 'nodejs';
export const dynamic = 'force-dynamic';

type Ctx = { params: Promise<{ teamId: string }> };

/** Projects of the team (members). */
export async function GET(request: Request, ctx: Ctx) {
  try {
    const teamId = idParam.parse((await ctx.params).teamId);
    const { user } = await requireTeamAccess(request, teamId, 'team.read');
    return Response.json({ projects: await listTeamProjects(teamId, user) });
  } catch (error) {
    return toErrorResponse(error);
  }
}

/** Create: `{ name, description? }` → 201 `{ project }` ('project.create'). */
export async function POST(request: Request, ctx: Ctx) {
  try {
    const teamId = idParam.parse((await ctx.params).teamId);
    const { user } = await requireTeamAccess(request, teamId, 'project.create');
    const project = await createProject(teamId, projectInput.parse(await request.json()), user);
    return Response.json({ project }, { status: 201 });
  } catch (error) {
    return toErrorResponse(error);
  }
}
