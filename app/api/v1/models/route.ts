import { authenticateRequest } from '@/lib/auth/request-access';
import { toErrorResponse } from '@/lib/http/errors';
import { listBuiltinModels } from '@/lib/jobs/models';

export const runtime = 'nodejs';
export const dynamic = 'force-dynamic';

/** Built-in process models (invented demo models) usable as `modelId` when starting an analysis. */
export async function GET(request: Request) {
  try {
    await authenticateRequest(request);
    return Response.json({ models: listBuiltinModels().map((m) => ({ id: m.id, name: m.name, version: m.version, description: m.description, model: m.model })) });
  } catch (error) {
    return toErrorResponse(error);
  }
}
