import { getDb } from '@/db/client';
import { requireProjectAccess } from '@/lib/auth/request-access';
import { idParam } from '@/lib/data/schemas';
import { toErrorResponse } from '@/lib/http/errors';
import { listProjectLayouts, storeLayoutUpload } from '@/lib/uploads/layouts';

export const runtime = 'nodejs';
export const dynamic = 'force-dynamic';

type Ctx = { params: Promise<{ projectId: string }> };

/** Layouts of the project with their revisions (newest first). */
export async function GET(request: Request, ctx: Ctx) {
  try {
    const projectId = idParam.parse((await ctx.params).projectId);
    await requireProjectAccess(request, projectId, 'project.read');
    return Response.json({ layouts: listProjectLayouts(getDb(), projectId) });
  } catch (error) {
    return toErrorResponse(error);
  }
}

/**
 * Upload a layout (multipart/form-data: `file`, optional `name`, `layoutId`, `note`). Same name (or layoutId) as an
 * existing layout adds a revision. 201 with the revision; 413 over the limit; 422 unreadable file.
 */
export async function POST(request: Request, ctx: Ctx) {
  try {
    const projectId = idParam.parse((await ctx.params).projectId);
    const { user } = await requireProjectAccess(request, projectId, 'layout.upload');
    const revision = await storeLayoutUpload(getDb(), { projectId, userId: user.id, request });
    return Response.json({ revision }, { status: 201 });
  } catch (error) {
    return toErrorResponse(error);
  }
}
