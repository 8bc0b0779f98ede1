import { getDb } from '@/db/client';
import { idParam } from '@/lib/data/schemas';
import { toErrorResponse } from '@/lib/http/errors';
import { requireLayoutAccess } from '@/lib/jobs/access';
import { getLayout, storeLayoutUpload } from '@/lib/uploads/layouts';

export const runtime = 'nodejs';
export const dynamic = 'force-dynamic';

type Ctx = { params: Promise<{ layoutId: string }> };

/** The layout and its revisions (newest first). */
export async function GET(request: Request, ctx: Ctx) {
  try {
    const layoutId = idParam.parse((await ctx.params).layoutId);
    await requireLayoutAccess(request, layoutId, 'project.read');
    return Response.json({ layout: getLayout(getDb(), layoutId) });
  } catch (error) {
    return toErrorResponse(error);
  }
}

/** Upload a new revision of this layout (multipart/form-data: `file`, optional `note`). */
export async function POST(request: Request, ctx: Ctx) {
  try {
    const layoutId = idParam.parse((await ctx.params).layoutId);
    const { user, project } = await requireLayoutAccess(request, layoutId, 'layout.upload');
    const revision = await storeLayoutUpload(getDb(), { projectId: project.id, userId: user.id, request, layoutId });
    return Response.json({ revision }, { status: 201 });
  } catch (error) {
    return toErrorResponse(error);
  }
}
