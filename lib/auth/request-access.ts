import 'server-only';
import type { ProjectRow } from '@/db/schema';
import { ApiError } from '@/lib/http/errors';
import { assertSameOrigin } from '@/lib/http/origin';
import { resolveApiToken } from './api-tokens';
import { requireProjectPermission, requireTeamMember, requireTeamPermission, type TeamAccess } from './guard';
import type { TeamAction } from './permissions';
import { requireUser, type AuthUser } from './session';

/** Who is calling: a session user, or a token owner limited to the token's team. */
export type RequestAuth = { user: AuthUser; tokenTeamId: string | null };

/**
 * Authenticates an API request in exactly one way. With an Authorization header: by the Bearer token alone — the
 * cookie is ignored, a malformed, unknown or revoked token is 401 and nothing falls back to the session; no Origin
 * check, since a token is no ambient credential a foreign site could make a browser send. Without one: by the
 * session cookie, and every unsafe method must pass the same-origin check first.
 */
export async function authenticateRequest(request: Request): Promise<RequestAuth> {
  const header = request.headers.get('authorization');
  if (header !== null) {
    const m = /^Bearer\s+(\S+)\s*$/i.exec(header);
    if (!m?.[1]) throw new ApiError('unauthorized', 'Authorization header must be "Bearer <token>".');
    const resolved = resolveApiToken(m[1]);
    if (!resolved) throw new ApiError('unauthorized', 'API token is not valid or has been revoked.');
    return { user: resolved.user, tokenTeamId: resolved.teamId };
  }
  assertSameOrigin(request);
  return { user: await requireUser(), tokenTeamId: null };
}

/**
 * For cookie-only endpoints (sign-out, accepting an invitation, ...): refuses any Authorization header with 401
 * (a token cannot act there, and its presence must not let a cookie through unchecked), then the Origin check,
 * then the session.
 */
export async function requireCookieUser(request: Request): Promise<AuthUser> {
  if (request.headers.get('authorization') !== null) {
    throw new ApiError('unauthorized', 'This endpoint takes the browser session only, not an API token.');
  }
  assertSameOrigin(request);
  return requireUser();
}

/** A token only reaches its own team; other teams' resources look like they do not exist. */
function assertTokenScope(auth: RequestAuth, teamId: string, what: string): void {
  if (auth.tokenTeamId !== null && auth.tokenTeamId !== teamId) throw new ApiError('not_found', `${what} not found.`);
}

/** Authenticate + team permission, in the one order every API handler uses. */
export async function requireTeamAccess(request: Request, teamId: string, action: TeamAction | 'team.read'): Promise<TeamAccess> {
  return authorizeTeam(await authenticateRequest(request), teamId, action);
}

/**
 * Team permission for a caller already authenticated with `authenticateRequest` — for handlers that learn the
 * team from the request body, so they can answer 401 before reading the body and 400 before checking the team.
 */
export async function authorizeTeam(auth: RequestAuth, teamId: string, action: TeamAction | 'team.read'): Promise<TeamAccess> {
  assertTokenScope(auth, teamId, 'Team');
  return action === 'team.read' ? requireTeamMember(teamId, auth.user) : requireTeamPermission(teamId, action, auth.user);
}

/** Authenticate + project permission (404 for projects outside the caller's teams or token scope). */
export async function requireProjectAccess(
  request: Request,
  projectId: string,
  action: TeamAction | 'project.read',
): Promise<TeamAccess & { project: ProjectRow }> {
  const auth = await authenticateRequest(request);
  const access = await requireProjectPermission(projectId, action, auth.user);
  assertTokenScope(auth, access.teamId, 'Project');
  return access;
}
