import type { TeamRole } from '@/lib/auth/permissions';
import type { AuthUser } from '@/lib/auth/session';
import { publicBaseUrl } from '@/lib/http/base-url';
import type { Actor } from './review-actions';

/**
 * What the review logic needs from a passed access check (lib/jobs/access requireAnalysisAccess): the actor, and
 * a link to the analysis for e-mails.
 */
export function reviewContext(request: Request, analysisId: string, access: { user: AuthUser; role: TeamRole; teamId: string }) {
  const actor: Actor = { id: access.user.id, name: access.user.name, role: access.role };
  return { teamId: access.teamId, role: access.role, actor, link: `${publicBaseUrl(request.headers)}/analyses/${analysisId}` };
}
