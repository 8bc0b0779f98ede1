import 'server-only';
import { getDb } from '@/db/client';
import { teamRoleOf } from '@/lib/auth/guard';
import type { TeamAction } from '@/lib/auth/permissions';
import { authorizeTeam, type RequestAuth } from '@/lib/auth/request-access';
import { ApiError } from '@/lib/http/errors';
import { ruleSetTeamId } from './rule-sets';
import { versionTeamId } from './versions';

// Resources reached by their own id: the handler authenticates first (anonymous callers learn nothing), then the team is found;
// ids of teams the caller is not in answer 404 like unknown ids; then the usual team permission check.

async function byTeam(auth: RequestAuth, find: () => string, what: string, action: TeamAction | 'team.read') {
  const teamId = find();
  if (!teamRoleOf(auth.user.id, teamId) || (auth.tokenTeamId !== null && auth.tokenTeamId !== teamId)) throw new ApiError('not_found', `${what} not found.`);
  return authorizeTeam(auth, teamId, action);
}

/** `auth` from authenticateRequest (called first by the handler, so anonymous callers get 401 before any lookup). */
export function requireVersionAccess(auth: RequestAuth, versionId: string, action: TeamAction | 'team.read') {
  return byTeam(auth, () => versionTeamId(getDb(), versionId), 'Model version', action);
}

export function requireRuleSetAccess(auth: RequestAuth, ruleSetId: string, action: TeamAction | 'team.read') {
  return byTeam(auth, () => ruleSetTeamId(getDb(), ruleSetId), 'Rule set', action);
}
