import { openApiDocument } from '@/lib/api/openapi';

export const runtime = 'nodejs';

/** The OpenAPI 3.1 document of this API (public: it describes routes, not data). */
export function GET() {
  return Response.json(openApiDocument, { headers: { 'cache-control': 'public, max-age=300' } });
}
