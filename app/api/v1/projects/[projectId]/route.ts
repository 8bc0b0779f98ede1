import { requireProjectAccess } from '@/lib/auth/request-access';
import { getProject } from '@/lib/data/projects';
import { idParam } from '@/lib/data/schemas';
import { toErrorResponse } from '@/lib/http/errors';

export const runtime = 'nodejs';
export const dynamic = 'force-dynamic';

/** One project with the caller's role (members of its team, tokens of its team; 404 otherwise). */
export async function GET(request: Request, ctx: { params: Promise<{ projectId: string }> }) {
  try {
    const projectId = idParam.parse((await ctx.params).projectId);
    const access = await requireProjectAccess(request, projectId, 'project.read');
    return Response.json({ project: await getProject(projectId, access.user) });
  } catch (error) {
    return toErrorResponse(error);
  }
}
