import { FINDING_STATUSES } from '@/db/schema/reviews';
import { carryBody } from '@/lib/review/compare-store';
import { FINDING_SORTS } from '@/lib/review/findings-query';
import { prefsBody, readBody } from '@/lib/review/notifications';
import { changeBody, commentBody } from '@/lib/review/review-actions';
import { signoffBody } from '@/lib/review/signoff';
import { arrayOf, bool, int, isoTime, nullable, num, object, operation, queryParam, ref, str } from './build';
import type { JsonSchema, PathItemObject } from './types';

// The review workflow: findings with their review state, threads, bulk status changes, sign-off, revision
// compare, CSV export and notifications (app/api/v1/analyses/{analysisId}/{findings,signoff,compare,findings.csv}
// and app/api/v1/notifications), described from lib/review.

const analysisId = { analysisId: 'Analysis id' };
const statusEnum: JsonSchema = { type: 'string', enum: [...FINDING_STATUSES] };
const bbox: JsonSchema = { ...arrayOf(num()), minItems: 4, maxItems: 4, description: 'µm [x0, y0, x1, y1]' };

export const REVIEW_SCHEMAS: Record<string, JsonSchema> = {
  Finding: object({
    id: str('analysis_flags row id (use in /findings/{findingId})'),
    key: str('The pipeline\'s stable flag id'),
    rank: int('Order in the pipeline\'s list, worst first'),
    kind: str(),
    severity: str(),
    cause: str('What crossed which limit; findings are grouped by kind, cause and width class or nearness'),
    layer: str('Etch layer(s), e.g. "1/0"'),
    bboxUm: bbox,
    atUm: { ...arrayOf(num()), minItems: 2, maxItems: 2 },
    measured: num(),
    limit: num(),
    unit: str(),
    message: str(),
    featureId: nullable(int()),
    widthUm: nullable(num('Width of the opening, µm')),
    status: statusEnum,
    assignee: nullable(object({ id: str(), name: str() })),
    waiver: nullable(object({ reason: str(), approverName: str(), at: isoTime(), carriedNote: nullable(str()) })),
    events: int('Entries in the thread'),
  }),
  FindingGroup: object({
    id: str('Stable group id; POST it in groupIds to act on every member'),
    kind: str(),
    cause: str(),
    severity: str('Worst member severity'),
    count: int('Members'),
    matching: int('Members passing the filters'),
    status: { type: 'string', enum: [...FINDING_STATUSES, 'mixed'] },
    statusCounts: { type: 'object' },
    assignees: arrayOf(str()),
    widthRangeUm: nullable({ ...arrayOf(num()), minItems: 2, maxItems: 2 }),
    bboxUm: bbox,
    first: ref('Finding'),
  }),
  SignoffState: object({
    signoff: nullable(object({ signedByName: str(), signedAt: isoTime(), modelName: str(), modelVersion: str(), calibrationDate: nullable(str()), note: str(), counts: { type: 'object' } })),
    blocking: int('Error findings still open or unwaived'),
    unlistedErrors: int('Errors counted but not listed (capped list)'),
    canSignOff: bool(),
    reason: nullable(str()),
  }),
  ThreadEvent: object({
    id: str(),
    type: { type: 'string', enum: ['comment', 'status', 'assign', 'carry'] },
    at: isoTime(),
    actorName: str(),
    fromStatus: nullable(statusEnum),
    toStatus: nullable(statusEnum),
    assigneeName: nullable(str()),
    body: str('Plain text, never HTML'),
    mentions: arrayOf(str()),
  }),
};

const filterParams = [
  queryParam('kind', 'Flag kind', { type: 'string' }),
  queryParam('severity', 'error, warning or info', { type: 'string', enum: ['error', 'warning', 'info'] }),
  queryParam('status', 'Review status', statusEnum),
  queryParam('layer', 'Etch layer, e.g. 1/0', { type: 'string' }),
  queryParam('assignee', 'User id, or "none"', { type: 'string' }),
  queryParam('q', 'Text search in key, kind, cause, message, assignee and waiver reason', { type: 'string' }),
];
const briefFinding = object({ id: str(), key: str(), kind: str(), severity: str(), atUm: arrayOf(num()), message: str(), status: statusEnum, waiver: { type: ['object', 'null'] } });

export const REVIEW_PATHS: Record<string, PathItemObject> = {
  '/analyses/{analysisId}/findings': {
    get: operation('get', {
      id: 'listFindings',
      tag: 'Review',
      summary: 'Findings with review state (grouped or flat)',
      description: 'Filtered, sorted and paged on the server. `capped` is true when the pipeline counted more flags than it listed.',
      access: 'session-or-token',
      permission: 'project.read',
      path: analysisId,
      query: [
        queryParam('view', 'groups (default) or flat', { type: 'string', enum: ['groups', 'flat'] }),
        queryParam('group', 'Only this group\'s members (flat)', { type: 'string' }),
        ...filterParams,
        queryParam('key', 'Exactly this finding key', { type: 'string' }),
        queryParam('locate', 'Return the page holding this finding key (or its group) and its row id in `located`', { type: 'string' }),
        queryParam('sort', 'Sort key', { type: 'string', enum: [...FINDING_SORTS] }),
        queryParam('dir', 'asc or desc', { type: 'string', enum: ['asc', 'desc'] }),
        queryParam('offset', 'First row', { type: 'integer', minimum: 0 }),
        queryParam('limit', 'Rows per page (≤ 500)', { type: 'integer', minimum: 1, maximum: 500 }),
      ],
      errors: [409],
      ok: {
        200: {
          description: 'One page.',
          schema: {
            type: 'object',
            properties: {
              view: { type: 'string' },
              total: int(),
              offset: int(),
              limit: int(),
              items: arrayOf({ anyOf: [ref('Finding'), ref('FindingGroup')] }),
              located: nullable(str('Row id of the located finding (key or group id)')),
              listed: int(),
              counted: int(),
              capped: bool(),
              shortKinds: arrayOf(object({ kind: str(), counted: int(), listed: int() })),
              kinds: arrayOf(str()),
              layers: arrayOf(str()),
              members: arrayOf(object({ id: str(), name: str(), handle: str() })),
              signoff: ref('SignoffState'),
              can: { type: 'object' },
            },
          },
        },
      },
    }),
  },
  '/analyses/{analysisId}/findings/bulk': {
    post: operation('post', {
      id: 'changeFindings',
      tag: 'Review',
      summary: 'Set status and/or assignee of findings or groups',
      description: 'A group acts on all its members. Waiving needs flag.waive and a written reason; verifying needs flag.verify; other statuses and assignment need flag.triage. Refused (409) after sign-off.',
      access: 'session-or-token',
      permission: 'flag.triage',
      path: analysisId,
      body: changeBody,
      errors: [409, 422],
      ok: { 200: { description: 'Changed.', schema: object({ changed: int(), requested: int() }) } },
    }),
  },
  '/analyses/{analysisId}/findings/{findingId}': {
    get: operation('get', {
      id: 'getFindingThread',
      tag: 'Review',
      summary: 'A finding\'s thread',
      access: 'session-or-token',
      permission: 'project.read',
      path: { ...analysisId, findingId: 'Finding id (Finding.id)' },
      ok: { 200: { description: 'Thread, oldest first.', schema: object({ findingId: str(), key: str(), events: arrayOf(ref('ThreadEvent')) }) } },
    }),
  },
  '/analyses/{analysisId}/findings/{findingId}/comments': {
    post: operation('post', {
      id: 'addFindingComment',
      tag: 'Review',
      summary: 'Comment on a finding',
      description: 'Plain text; `@handle` (e-mail name or first name) notifies that team member.',
      access: 'session-or-token',
      permission: 'flag.comment',
      path: { ...analysisId, findingId: 'Finding id (Finding.id)' },
      body: commentBody,
      errors: [409],
      ok: { 201: { description: 'Added.', schema: object({ id: str(), mentions: arrayOf(str()) }) } },
    }),
  },
  '/analyses/{analysisId}/findings.csv': {
    get: operation('get', {
      id: 'exportFindingsCsv',
      tag: 'Review',
      summary: 'Findings as CSV',
      description: 'One row per finding with status, assignee and waiver; accepts the list\'s filters.',
      access: 'session-or-token',
      permission: 'project.read',
      path: analysisId,
      query: filterParams,
      errors: [409],
      ok: { 200: { description: 'CSV (RFC 4180).', contentType: 'text/csv', schema: { type: 'string' } } },
    }),
  },
  '/analyses/{analysisId}/signoff': {
    get: operation('get', {
      id: 'getSignoff',
      tag: 'Review',
      summary: 'Sign-off state',
      access: 'session-or-token',
      permission: 'project.read',
      path: analysisId,
      errors: [409],
      ok: { 200: { description: 'State.', schema: ref('SignoffState') } },
    }),
    post: operation('post', {
      id: 'signOffAnalysis',
      tag: 'Review',
      summary: 'Sign off an analysis',
      description: 'Refused (409) while an error finding is open or unwaived, or errors were not all listed. Records who, when and the model version.',
      access: 'session-or-token',
      permission: 'revision.signoff',
      path: analysisId,
      body: signoffBody,
      errors: [409],
      ok: { 201: { description: 'Signed off.', schema: object({ signoff: { type: 'object' } }) } },
    }),
  },
  '/analyses/{analysisId}/compare': {
    get: operation('get', {
      id: 'compareAnalyses',
      tag: 'Review',
      summary: 'Compare with an earlier analysis',
      description: 'Findings matched by kind and location within `toleranceUm` (default 1 µm).',
      access: 'session-or-token',
      permission: 'project.read',
      path: analysisId,
      query: [queryParam('with', 'Earlier analysis id', { type: 'string' }, true), queryParam('toleranceUm', 'Match distance, µm', { type: 'number', minimum: 0 })],
      errors: [409],
      ok: {
        200: {
          description: 'Counts and lists.',
          schema: {
            type: 'object',
            properties: {
              counts: object({ added: int(), resolved: int(), unchanged: int() }),
              carriable: int(),
              added: arrayOf(briefFinding),
              resolved: arrayOf(briefFinding),
              unchanged: arrayOf(object({ before: briefFinding, after: briefFinding, distanceUm: num() })),
            },
          },
        },
      },
    }),
  },
  '/analyses/{analysisId}/compare/carry-waivers': {
    post: operation('post', {
      id: 'carryWaivers',
      tag: 'Review',
      summary: 'Carry waivers over from an earlier analysis',
      access: 'session-or-token',
      permission: 'flag.waive',
      path: analysisId,
      body: carryBody,
      errors: [409],
      ok: { 200: { description: 'Carried.', schema: object({ carried: int() }) } },
    }),
  },
  '/notifications': {
    get: operation('get', {
      id: 'listNotifications',
      tag: 'Review',
      summary: 'My notifications',
      access: 'session-or-token',
      ok: {
        200: {
          description: 'Newest first.',
          schema: object({ unread: int(), items: arrayOf(object({ id: str(), kind: str(), at: isoTime(), actorName: str(), title: str(), body: str(), read: bool(), context: nullable(str()), href: nullable(str()) })) }),
        },
      },
    }),
  },
  '/notifications/read': {
    post: operation('post', {
      id: 'markNotificationsRead',
      tag: 'Review',
      summary: 'Mark notifications read',
      access: 'session-or-token',
      body: readBody,
      ok: { 200: { description: 'Marked.', schema: object({ marked: int() }) } },
    }),
  },
  '/notifications/prefs': {
    get: operation('get', {
      id: 'getNotificationPrefs',
      tag: 'Review',
      summary: 'My e-mail settings',
      access: 'session-or-token',
      ok: { 200: { description: 'Settings.', schema: object({ emailAssignment: bool(), emailMention: bool(), emailStatus: bool() }) } },
    }),
    put: operation('put', {
      id: 'setNotificationPrefs',
      tag: 'Review',
      summary: 'Change my e-mail settings',
      access: 'session-or-token',
      body: prefsBody,
      ok: { 200: { description: 'Saved.', schema: object({ emailAssignment: bool(), emailMention: bool(), emailStatus: bool() }) } },
    }),
  },
};
