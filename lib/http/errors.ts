import { z } from 'zod';

/** Error codes a handler may answer with, and their HTTP status. */
export const API_ERROR_STATUS = {
  bad_request: 400,
  unauthorized: 401,
  forbidden: 403,
  not_found: 404,
  conflict: 409,
  payload_too_large: 413,
  unsupported_media_type: 415,
  unprocessable: 422,
  rate_limited: 429,
  internal: 500,
} as const;
export type ApiErrorCode = keyof typeof API_ERROR_STATUS;

const DEFAULT_MESSAGE: Record<ApiErrorCode, string> = {
  bad_request: 'The request is not valid.',
  unauthorized: 'Sign in first.',
  forbidden: 'Your role in this team does not allow this.',
  not_found: 'Not found.',
  conflict: 'This conflicts with existing data.',
  payload_too_large: 'The upload is too large.',
  unsupported_media_type: 'Unsupported content type.',
  unprocessable: 'The input could not be processed.',
  rate_limited: 'Too many attempts; try again later.',
  internal: 'Something went wrong on the server.',
};

/**
 * The one error type handlers, actions and the DAL throw for expected failures. `message` is shown to the user
 * as is, so it must be one plain line without internals. `fieldErrors` carries per-field form messages.
 */
export class ApiError extends Error {
  readonly code: ApiErrorCode;
  readonly status: number;
  readonly fieldErrors?: Record<string, string[]>;
  readonly headers?: Record<string, string>;

  constructor(
    code: ApiErrorCode,
    message?: string,
    extra?: { fieldErrors?: Record<string, string[]>; headers?: Record<string, string> },
  ) {
    super(message ?? DEFAULT_MESSAGE[code]);
    this.name = 'ApiError';
    this.code = code;
    this.status = API_ERROR_STATUS[code];
    this.fieldErrors = extra?.fieldErrors;
    this.headers = extra?.headers;
  }
}

export function isApiError(error: unknown): error is ApiError {
  return error instanceof ApiError;
}

/** Per-field messages of a zod error (zod 4 `z.flattenError`), with form-level issues under `_form`. */
export function zodFieldErrors(error: z.ZodError): Record<string, string[]> {
  const flat = z.flattenError(error);
  const out: Record<string, string[]> = {};
  for (const [key, messages] of Object.entries(flat.fieldErrors as Record<string, string[] | undefined>)) {
    if (messages && messages.length > 0) out[key] = messages;
  }
  if (flat.formErrors.length > 0) out._form = flat.formErrors;
  return out;
}

/** JSON body of every error response. */
export type ErrorBody = { error: { code: ApiErrorCode; message: string; fieldErrors?: Record<string, string[]> } };

/**
 * Maps anything thrown in a route handler to a JSON error response. ApiError and ZodError keep their meaning;
 * everything else is logged on the server and answered with a generic 500, never a stack trace.
 */
export function toErrorResponse(error: unknown): Response {
  if (error instanceof ApiError) {
    const body: ErrorBody = { error: { code: error.code, message: error.message, fieldErrors: error.fieldErrors } };
    return Response.json(body, { status: error.status, headers: error.headers });
  }
  if (error instanceof z.ZodError) {
    const fieldErrors = zodFieldErrors(error);
    const first = error.issues[0];
    const where = first && first.path.length > 0 ? `${first.path.join('.')}: ` : '';
    const body: ErrorBody = {
      error: { code: 'bad_request', message: `${where}${first?.message ?? 'invalid input'}`, fieldErrors },
    };
    return Response.json(body, { status: 400 });
  }
  if (error instanceof SyntaxError) {
    const body: ErrorBody = { error: { code: 'bad_request', message: 'The request body is not valid JSON.' } };
    return Response.json(body, { status: 400 });
  }
  console.error('[trenchant] unhandled error in route handler:', error);
  const body: ErrorBody = { error: { code: 'internal', message: DEFAULT_MESSAGE.internal } };
  return Response.json(body, { status: 500 });
}
