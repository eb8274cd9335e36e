import { publicAccess, secureRouter } from '../auth/access';
import { buildOpenApiDocument } from './openapi-document';

/**
 * `GET /api/openapi.json`: the OpenAPI 3.1 document (server/openapi/openapi-document.ts).
 * Open to anyone: it describes the routes and holds no data, and other systems read it
 * before they have an account.
 */
export function openapiRoutes() {
  const r = secureRouter();
  // Built on first request and kept: the document changes only with the code.
  let document: Record<string, unknown> | null = null;
  r.get('/openapi.json', publicAccess, (_req, res) => {
    document ??= buildOpenApiDocument();
    res.setHeader('Cache-Control', 'no-cache');
    res.json(document);
  });
  return r;
}
