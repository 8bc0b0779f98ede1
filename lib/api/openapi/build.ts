import { z } from 'zod';
import type { Access, JsonSchema, OperationObject, ParameterObject, Ref, ResponseObject } from './types';

/** JSON Schema (2020-12) of what a client may send for a zod schema: defaults make fields optional. */
export function inputSchema(schema: z.ZodType): JsonSchema {
  const { $schema: _dialect, ...rest } = z.toJSONSchema(schema, { io: 'input', unrepresentable: 'any' }) as JsonSchema;
  return rest;
}

/** JSON Schema of what a zod schema produces (for responses that echo parsed data, e.g. stored settings). */
export function outputSchema(schema: z.ZodType): JsonSchema {
  const { $schema: _dialect, ...rest } = z.toJSONSchema(schema, { io: 'output', unrepresentable: 'any' }) as JsonSchema;
  return rest;
}

export const ref = (name: string): JsonSchema => ({ $ref: `#/components/schemas/${name}` });
const responseRef = (name: string): Ref => ({ $ref: `#/components/responses/${name}` });

/** An object schema whose listed properties are all required. */
export function object(properties: Record<string, JsonSchema>, extra: JsonSchema = {}): JsonSchema {
  return { type: 'object', properties, required: Object.keys(properties), ...extra };
}
export const arrayOf = (items: JsonSchema): JsonSchema => ({ type: 'array', items });
export const nullable = (s: JsonSchema): JsonSchema => ({ anyOf: [s, { type: 'null' }] });
export const str = (description?: string, extra: JsonSchema = {}): JsonSchema => ({ type: 'string', ...(description ? { description } : {}), ...extra });
export const num = (description?: string, extra: JsonSchema = {}): JsonSchema => ({ type: 'number', ...(description ? { description } : {}), ...extra });
export const int = (description?: string, extra: JsonSchema = {}): JsonSchema => ({ type: 'integer', ...(description ? { description } : {}), ...extra });
export const bool = (description?: string): JsonSchema => ({ type: 'boolean', ...(description ? { description } : {}) });
export const isoTime = (description?: string): JsonSchema => str(description, { format: 'date-time' });

export const SECURITY: Record<Access, Record<string, string[]>[]> = {
  public: [],
  session: [{ sessionCookie: [] }],
  'session-or-token': [{ bearerToken: [] }, { sessionCookie: [] }],
};

/** Error statuses with a shared response in components.responses. */
export const ERROR_RESPONSES = {
  400: 'BadRequest',
  401: 'Unauthorized',
  403: 'Forbidden',
  404: 'NotFound',
  409: 'Conflict',
  413: 'PayloadTooLarge',
  415: 'UnsupportedMediaType',
  422: 'Unprocessable',
  429: 'RateLimited',
} as const;
export type ErrorStatus = keyof typeof ERROR_RESPONSES;

export type OperationSpec = {
  id: string;
  summary: string;
  description?: string;
  tag: string;
  access: Access;
  /** permission checked (TeamAction) or a read level ('team.read', 'project.read') */
  permission?: string;
  path?: Record<string, string>;
  query?: ParameterObject[];
  /** JSON body (zod schema or JSON Schema), or another media type */
  body?: z.ZodType | JsonSchema | { contentType: string; schema: JsonSchema; description?: string };
  /** success status → description and optional body */
  ok: Record<number, { description: string; schema?: JsonSchema; contentType?: string; headers?: ResponseObject['headers'] }>;
  /** error statuses beyond the ones implied by access, permission, path params and body */
  errors?: ErrorStatus[];
};

/**
 * Builds one operation. Error responses implied by the spec are added: 401 unless public, 403 when a permission
 * is checked or a cookie-authenticated write must pass the same-origin check, 404 for path parameters, 400 for
 * bodies and queries (zod validation).
 */
export function operation(method: string, spec: OperationSpec): OperationObject {
  const errors = new Set<ErrorStatus>(spec.errors ?? []);
  const write = method !== 'get';
  if (spec.access !== 'public') errors.add(401);
  // Project-level checks answer 404 to non-members (ids of other teams' projects are not revealed); team-level
  // checks answer 403, and 404 to a token of another team.
  if (spec.permission && spec.permission !== 'project.read') errors.add(403);
  if (spec.permission && spec.access === 'session-or-token') errors.add(404);
  if (write) errors.add(403); // the same-origin check refuses cross-site cookie writes
  if (spec.path && Object.keys(spec.path).length > 0) errors.add(404);
  if (spec.body || spec.query?.length) errors.add(400);
  const responses: OperationObject['responses'] = {};
  for (const [status, r] of Object.entries(spec.ok)) {
    responses[status] = {
      description: r.description,
      ...(r.headers ? { headers: r.headers } : {}),
      ...(r.schema ? { content: { [r.contentType ?? 'application/json']: { schema: r.schema } } } : {}),
    };
  }
  for (const status of [...errors].sort()) responses[String(status)] = responseRef(ERROR_RESPONSES[status]);
  responses.default = responseRef('Error');
  const parameters: ParameterObject[] = [
    ...Object.entries(spec.path ?? {}).map(([name, description]) => ({ name, in: 'path' as const, required: true, description, schema: { type: 'string' } })),
    ...(spec.query ?? []),
  ];
  return {
    operationId: spec.id,
    summary: spec.summary,
    ...(spec.description ? { description: spec.description } : {}),
    tags: [spec.tag],
    security: SECURITY[spec.access],
    ...(parameters.length ? { parameters } : {}),
    ...(spec.body ? { requestBody: requestBody(spec.body) } : {}),
    responses,
    ...(spec.permission ? { 'x-permission': spec.permission } : {}),
    'x-access': spec.access,
  };
}

function requestBody(body: NonNullable<OperationSpec['body']>): NonNullable<OperationObject['requestBody']> {
  if (body instanceof z.ZodType) return { required: true, content: { 'application/json': { schema: inputSchema(body) } } };
  if (typeof body.contentType === 'string' && typeof body.schema === 'object' && body.schema !== null) {
    const b = body as { contentType: string; schema: JsonSchema; description?: string };
    return { required: true, ...(b.description ? { description: b.description } : {}), content: { [b.contentType]: { schema: b.schema } } };
  }
  return { required: true, content: { 'application/json': { schema: body as JsonSchema } } };
}

/** A query parameter. */
export function queryParam(name: string, description: string, schema: JsonSchema, required = false): ParameterObject {
  return { name, in: 'query', required, description, schema };
}
