import { teamLimitsInput } from '@/lib/jobs/team-limits';
import { int, object, operation } from './build';
import type { PathItemObject } from './types';

// Team resource limits: app/api/v1/teams/[teamId]/limits.

const limits = object({
  maxPolygons: int('Most flattened polygons one uploaded layout may have.'),
  maxPoints: int('Most flattened points (vertices) one uploaded layout may have.'),
  maxAnalysisBytes: int('Most bytes one analysis may write (maps and per-opening results).'),
  maxStoredBytes: int('Most bytes of stored analysis results the team may keep.'),
});

export const LIMITS_PATHS: Record<string, PathItemObject> = {
  '/teams/{teamId}/limits': {
    get: operation('get', {
      id: 'getTeamLimits',
      tag: 'Teams',
      summary: 'Resource limits of the team',
      description: 'Limits in force, the defaults, and the bytes of stored results in use.',
      access: 'session-or-token',
      permission: 'team.read',
      path: { teamId: 'Team id.' },
      ok: { 200: { description: 'The limits.', schema: object({ limits, defaults: limits, storedBytes: int('Bytes of stored results now.') }) } },
    }),
    put: operation('put', {
      id: 'setTeamLimits',
      tag: 'Teams',
      summary: 'Set the resource limits of the team',
      description:
        'Uploads beyond the polygon or point limit are refused with 422 naming the limit and the count; analyses that would write more than the per-analysis limit, or more than is left of the quota, fail with a message naming it.',
      access: 'session-or-token',
      permission: 'team.manage',
      path: { teamId: 'Team id.' },
      body: teamLimitsInput,
      ok: { 200: { description: 'The limits now in force.', schema: object({ limits }) } },
    }),
  },
};
