/**
 * A binary body that never changes for its key (results of a finished analysis): a strong ETag, a year of private
 * caching, and 304 on a matching If-None-Match — so `build` runs only when the client has no copy.
 */
export function immutableBinaryResponse(request: Request, etag: string, contentType: string, build: () => Uint8Array): Response {
  const headers = { 'cache-control': 'private, max-age=31536000, immutable', etag };
  if (request.headers.get('if-none-match') === etag) return new Response(null, { status: 304, headers });
  const body = build();
  return new Response(body as unknown as BodyInit, { headers: { ...headers, 'content-type': contentType, 'content-length': String(body.byteLength) } });
}
