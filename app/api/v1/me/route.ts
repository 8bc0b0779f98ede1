import { authenticateRequest } from '@/lib/auth/request-access';
import { listMyTeams } from '@/lib/data/teams';
import { toErrorResponse } from '@/lib/http/errors';

export const runtime = 'nodejs';
export const dynamic = 'force-dynamic';

/**
 * Who is calling: the user, their teams with roles, and how they authenticated. With an API token only the
 * token's team is listed (the token reaches nothing else) and `token.teamId` names it.
 */
export async function GET(request: Request) {
  try {
    const { user, tokenTeamId } = await authenticateRequest(request);
    const teams = (await listMyTeams(user)).filter((t) => tokenTeamId === null || t.id === tokenTeamId);
    return Response.json({
      user,
      teams,
      auth: tokenTeamId === null ? { kind: 'session' as const, teamId: null } : { kind: 'token' as const, teamId: tokenTeamId },
    });
  } catch (error) {
    return toErrorResponse(error);
  }
}
