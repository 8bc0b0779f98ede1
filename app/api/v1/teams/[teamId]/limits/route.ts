import { getDb } from '@/db/client';
import { requireTeamAccess } from '@/lib/auth/request-access';
import { idParam } from '@/lib/data/schemas';
import { toErrorResponse } from '@/lib/http/errors';
import { DEFAULT_TEAM_LIMITS, getTeamLimits, setTeamLimits, teamLimitsInput, teamStoredResultBytes } from '@/lib/jobs/team-limits';

export const runtime = 'nodejs';
export const dynamic = 'force-dynamic';

type Ctx = { params: Promise<{ teamId: string }> };

/** The team's resource limits, the defaults and the stored-result bytes in use (members). */
export async function GET(request: Request, ctx: Ctx) {
  try {
    const teamId = idParam.parse((await ctx.params).teamId);
    await requireTeamAccess(request, teamId, 'team.read');
    const db = getDb();
    return Response.json({ limits: getTeamLimits(db, teamId), defaults: DEFAULT_TEAM_LIMITS, storedBytes: teamStoredResultBytes(db, teamId) });
  } catch (error) {
    return toErrorResponse(error);
  }
}

/** Set all four limits: `{ maxPolygons, maxPoints, maxAnalysisBytes, maxStoredBytes }` ('team.manage'). */
export async function PUT(request: Request, ctx: Ctx) {
  try {
    const teamId = idParam.parse((await ctx.params).teamId);
    const { user } = await requireTeamAccess(request, teamId, 'team.manage');
    const input = teamLimitsInput.parse(await request.json());
    return Response.json({ limits: setTeamLimits(getDb(), teamId, input, user.id) });
  } catch (error) {
    return toErrorResponse(error);
  }
}
