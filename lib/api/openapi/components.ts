import { API_ERROR_STATUS } from '@/lib/http/errors';
import { TEAM_ROLES } from '@/lib/auth/permissions';
import { arrayOf, bool, int, isoTime, nullable, object, ref, str } from './build';
import type { JsonSchema, OpenApiDocument, ResponseObject } from './types';

/** Shapes shared by the account, team and project operations (mirror the DTOs of lib/data/*). */
export const CORE_SCHEMAS: Record<string, JsonSchema> = {
  Error: object(
    {
      error: object(
        {
          code: { type: 'string', enum: Object.keys(API_ERROR_STATUS) },
          message: str('One plain line, safe to show to a user.'),
          fieldErrors: {
            type: 'object',
            description: 'Per-field messages for invalid input; form-level messages under "_form".',
            additionalProperties: arrayOf(str()),
          },
        },
        { required: ['code', 'message'] },
      ),
    },
    { description: 'Body of every error response.' },
  ),
  Role: { type: 'string', enum: [...TEAM_ROLES] },
  User: object({ id: str(), email: str(undefined, { format: 'email' }), name: str() }),
  TeamSummary: object({ id: str(), name: str(), myRole: ref('Role'), memberCount: int() }),
  Member: object({ userId: str(), name: str(), email: str(), role: ref('Role'), joinedAt: isoTime() }),
  Project: object({
    id: str(),
    teamId: str(),
    teamName: str(),
    name: str(),
    description: str(),
    createdByName: nullable(str()),
    createdAt: isoTime(),
  }),
  ProjectWithRole: {
    allOf: [ref('Project'), object({ myRole: ref('Role') })],
  },
  Invite: object({ id: str(), email: str(), role: ref('Role'), createdAt: isoTime(), expiresAt: isoTime() }),
  OutboxMessage: object({ id: int(), receivedAt: isoTime(), from: str(), to: str(), subject: str(), body: str() }),
  Ok: object({ ok: bool() }),
};

const errorResponse = (description: string): ResponseObject => ({
  description,
  content: { 'application/json': { schema: ref('Error') } },
});

export const ERROR_RESPONSE_OBJECTS: Record<string, ResponseObject> = {
  Error: errorResponse('Unexpected error (500) or any status above.'),
  BadRequest: errorResponse('Invalid input: malformed JSON, or fields that fail validation (see fieldErrors).'),
  Unauthorized: errorResponse('No session and no valid API token, or the token is revoked.'),
  Forbidden: errorResponse('Your role in the team does not allow this, or a cookie-authenticated write came without a same-site Origin header.'),
  NotFound: errorResponse('No such resource, or it belongs to a team you (or the token) cannot reach.'),
  Conflict: errorResponse('Conflicts with existing data (e.g. a duplicate name).'),
  PayloadTooLarge: errorResponse('The upload is larger than the configured limit.'),
  UnsupportedMediaType: errorResponse('Wrong content type for this request.'),
  Unprocessable: errorResponse('The input is well-formed but cannot be processed (e.g. an unreadable layout).'),
  RateLimited: errorResponse('Too many attempts; the Retry-After header says when to try again.'),
};

export const SECURITY_SCHEMES: OpenApiDocument['components']['securitySchemes'] = {
  bearerToken: {
    type: 'http',
    scheme: 'bearer',
    bearerFormat: 'trn_…',
    description:
      'A personal API token from the API tokens page. It reaches one team and acts with its owner\'s role there. Requests with a token need no Origin header.',
  },
  sessionCookie: {
    type: 'apiKey',
    in: 'cookie',
    name: 'trenchant_session',
    description: 'The browser session. Writes must come from this site (same-origin Origin or Referer header).',
  },
};
