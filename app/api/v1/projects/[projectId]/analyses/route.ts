import { getDb } from '@/db/client';
import { requireProjectAccess } from '@/lib/auth/request-access';
import { idParam } from '@/lib/data/schemas';
import { toErrorResponse } from '@/lib/http/errors';
import { createAnalysis, createAnalysisBody, listProjectAnalyses } from '@/lib/jobs/analyses';

export const runtime = 'nodejs';
export const dynamic = 'force-dynamic';

type Ctx = { params: Promise<{ projectId: string }> };

/** Analyses of the project, newest first, with status and progress. */
export async function GET(request: Request, ctx: Ctx) {
  try {
    const projectId = idParam.parse((await ctx.params).projectId);
    await requireProjectAccess(request, projectId, 'project.read');
    return Response.json({ analyses: listProjectAnalyses(getDb(), projectId) });
  } catch (error) {
    return toErrorResponse(error);
  }
}

/**
 * Start an analysis: `{ revisionId, settings, modelId | model }`. 202 with the queued analysis; 400 bad settings
 * (field errors), 422 unknown layer (names the layers present) or invalid model.
 */
export async function POST(request: Request, ctx: Ctx) {
  try {
    const projectId = idParam.parse((await ctx.params).projectId);
    const { user } = await requireProjectAccess(request, projectId, 'analysis.create');
    const body = createAnalysisBody.parse(await request.json());
    const row = createAnalysis(getDb(), { projectId, userId: user.id, body });
    return Response.json(
      { analysis: { id: row.id, status: row.status, url: `/api/v1/analyses/${row.id}`, events: `/api/v1/analyses/${row.id}/events` } },
      { status: 202, headers: { location: `/api/v1/analyses/${row.id}` } },
    );
  } catch (error) {
    return toErrorResponse(error);
  }
}
