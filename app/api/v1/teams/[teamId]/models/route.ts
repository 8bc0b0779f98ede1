import { getDb } from '@/db/client';
import { requireTeamAccess } from '@/lib/auth/request-access';
import { idParam } from '@/lib/data/schemas';
import { toErrorResponse } from '@/lib/http/errors';
import { listBuiltinModels } from '@/lib/jobs/models';
import { createModelBody } from '@/lib/models/schemas';
import { createModel, listTeamModels } from '@/lib/models/versions';

export const runtime = 'nodejs';
export const dynamic = 'force-dynamic';

type Ctx = { params: Promise<{ teamId: string }> };

/** The team's process models with their versions, and the built-in samples a new model may start from (members). */
export async function GET(request: Request, ctx: Ctx) {
  try {
    const teamId = idParam.parse((await ctx.params).teamId);
    await requireTeamAccess(request, teamId, 'team.read');
    const samples = listBuiltinModels().map((m) => ({ id: m.id, name: m.name, description: m.description }));
    return Response.json({ models: listTeamModels(getDb(), teamId), samples });
  } catch (error) {
    return toErrorResponse(error);
  }
}

/** New model with a first draft: `{ name, key?, description?, featureKind?, fromVersionId | fromSample | document }` → 201 ('model.publish'). */
export async function POST(request: Request, ctx: Ctx) {
  try {
    const teamId = idParam.parse((await ctx.params).teamId);
    const { user } = await requireTeamAccess(request, teamId, 'model.publish');
    const version = createModel(getDb(), { teamId, userId: user.id, body: createModelBody.parse(await request.json()) });
    return Response.json({ version }, { status: 201 });
  } catch (error) {
    return toErrorResponse(error);
  }
}
