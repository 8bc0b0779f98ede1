import { createProject, listTeamProjects } from '@/lib/data/projects';
import { idParam, projectInput } from '@/lib/data/schemas';
import { toErrorResponse } from '@/lib/http/errors';
import { assertSameOrigin } from '@/lib/http/origin';

export const runtime = 'nodejs';
export const dynamic = 'force-dynamic';

type Ctx = { params: Promise<{ teamId: string }> };

/** Projects of the team (members). */
export async function GET(_request: Request, ctx: Ctx) {
  try {
    return Response.json({ projects: await listTeamProjects(idParam.parse((await ctx.params).teamId)) });
  } catch (error) {
    return toErrorResponse(error);
  }
}

/** Create: `{ name, description? }` → 201 `{ project }` ('project.create'). */
export async function POST(request: Request, ctx: Ctx) {
  try {
    assertSameOrigin(request);
    const teamId = idParam.parse((await ctx.params).teamId);
    const project = await createProject(teamId, projectInput.parse(await request.json()));
    return Response.json({ project }, { status: 201 });
  } catch (error) {
    return toErrorResponse(error);
  }
}
