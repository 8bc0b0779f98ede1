/**
 * The subset of OpenAPI 3.1 that Trenchant's document uses, typed so the document is checked data rather than a
 * JSON blob. Schemas are JSON Schema 2020-12 objects (what OpenAPI 3.1 uses), mostly generated from the same zod
 * schemas the handlers parse with.
 */

/** A JSON Schema 2020-12 object, or a `$ref` to components.schemas. */
export type JsonSchema = { [keyword: string]: unknown };

export const HTTP_METHODS = ['get', 'post', 'put', 'patch', 'delete'] as const;
export type HttpMethod = (typeof HTTP_METHODS)[number];

export interface ParameterObject {
  name: string;
  in: 'path' | 'query' | 'header';
  required: boolean;
  description?: string;
  schema: JsonSchema;
}

export interface MediaTypeObject {
  schema: JsonSchema;
  example?: unknown;
}

export interface HeaderObject {
  description: string;
  schema: JsonSchema;
}

export interface ResponseObject {
  description: string;
  headers?: Record<string, HeaderObject>;
  content?: Record<string, MediaTypeObject>;
}

export type Ref = { $ref: string };

export interface RequestBodyObject {
  required: boolean;
  description?: string;
  content: Record<string, MediaTypeObject>;
}

/** Who may call an operation; mirrored in `security` and shown on the API page. */
export type Access = 'public' | 'session' | 'session-or-token';

export interface OperationObject {
  operationId: string;
  summary: string;
  description?: string;
  tags: string[];
  /** [] = no authentication; otherwise any one of the listed schemes. */
  security: Record<string, string[]>[];
  parameters?: ParameterObject[];
  requestBody?: RequestBodyObject;
  responses: Record<string, ResponseObject | Ref>;
  /** Trenchant extension: the team permission the operation checks (lib/auth/permissions.ts), or a read level. */
  'x-permission'?: string;
  /** Trenchant extension: who may call (session cookie, API token, nobody needed). */
  'x-access': Access;
}

export type PathItemObject = Partial<Record<HttpMethod, OperationObject>>;

export interface OpenApiDocument {
  openapi: '3.1.0';
  info: { title: string; version: string; summary?: string; description?: string };
  jsonSchemaDialect?: string;
  servers: { url: string; description?: string }[];
  tags: { name: string; description: string }[];
  security: Record<string, string[]>[];
  paths: Record<string, PathItemObject>;
  components: {
    securitySchemes: Record<string, Record<string, string>>;
    schemas: Record<string, JsonSchema>;
    responses: Record<string, ResponseObject>;
  };
}
