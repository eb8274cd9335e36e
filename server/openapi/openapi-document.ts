/**
 * The OpenAPI 3.1 document of the API, made from the route list (server/openapi/api-routes.ts)
 * and the shared zod schemas through zod 4's own JSON Schema output (draft 2020-12, the
 * dialect OpenAPI 3.1 uses). Answers are described in their output form (what the server
 * sends), queries and bodies in their input form (what a client may send, before defaults).
 */
import { z } from 'zod';
import { CSRF_HEADER } from '../../shared/auth';
import { SESSION_COOKIE } from '../auth/session';
import { API_ROUTES, COMPONENTS, type ApiBody, type ApiRoute, type MultipartBody } from './api-routes';
import packageJson from '../../package.json';

type JsonSchema = Record<string, unknown>;

/** Where the answer schemas live in the document. */
export const COMPONENT_REF = '#/components/schemas/';

/** `/api/cases/:id` → `/api/cases/{id}`. */
export function openApiPath(expressPath: string): string {
  return expressPath.replace(/:([A-Za-z0-9_]+)/g, '{$1}');
}

/** Drops the keys zod adds for a stand-alone schema; inside the document they are noise. */
function bare(schema: JsonSchema): JsonSchema {
  const { $schema: _s, $id: _i, ...rest } = schema;
  return rest;
}

/** A request part (query or body) as JSON Schema, in its input form. */
function inputSchema(schema: z.ZodType): JsonSchema {
  return bare(z.toJSONSchema(schema, { io: 'input', target: 'draft-2020-12' }) as JsonSchema);
}

/** The answer schemas, each under its name, referring to each other by $ref. */
function componentSchemas(): { schemas: Record<string, JsonSchema>; names: Map<z.ZodType, string> } {
  const registry = z.registry<{ id: string }>();
  const names = new Map<z.ZodType, string>();
  for (const [name, schema] of Object.entries(COMPONENTS)) {
    registry.add(schema, { id: name });
    names.set(schema, name);
  }
  const out = z.toJSONSchema(registry, { io: 'output', target: 'draft-2020-12', uri: (id) => `${COMPONENT_REF}${id}` });
  const schemas: Record<string, JsonSchema> = {};
  for (const [name, schema] of Object.entries(out.schemas)) schemas[name] = bare(schema as JsonSchema);
  return { schemas, names };
}

function content(body: ApiBody, names: Map<z.ZodType, string>, where: string): Record<string, unknown> | undefined {
  if ('empty' in body) return undefined;
  if ('anyJson' in body) return { 'application/json': { schema: { type: 'object' } } };
  if ('file' in body) return Object.fromEntries(body.file.map((t) => [t, { schema: { type: 'string', contentMediaType: t } }]));
  const name = names.get(body.json);
  if (!name) throw new Error(`${where}: its answer schema is not in COMPONENTS (server/openapi/api-routes.ts); add it there under a name.`);
  return { 'application/json': { schema: { $ref: `${COMPONENT_REF}${name}` } } };
}

function multipartSchema(m: MultipartBody): JsonSchema {
  const properties: Record<string, JsonSchema> = {};
  const encoding: Record<string, { contentType: string }> = {};
  for (const [name, part] of Object.entries(m.parts)) {
    const fileSchema = { type: 'string', contentMediaType: 'application/octet-stream' };
    properties[name] =
      part.kind === 'text'
        ? { type: 'string', description: part.description }
        : part.kind === 'files'
          ? { type: 'array', items: fileSchema, description: part.description }
          : { ...fileSchema, description: part.description };
    if (part.mediaTypes) encoding[name] = { contentType: part.mediaTypes.join(', ') };
  }
  const required = Object.entries(m.parts)
    .filter(([, p]) => p.required)
    .map(([n]) => n);
  return { schema: { type: 'object', properties, ...(required.length ? { required } : {}) }, ...(Object.keys(encoding).length ? { encoding } : {}) };
}

/** Query parameters from an object schema's input form. */
function queryParameters(schema: z.ZodType, where: string): JsonSchema[] {
  const js = inputSchema(schema);
  if (js.type !== 'object' || typeof js.properties !== 'object') throw new Error(`${where}: a query schema must be an object.`);
  const required = new Set((js.required as string[] | undefined) ?? []);
  return Object.entries(js.properties as Record<string, JsonSchema>).map(([name, s]) => ({ name, in: 'query', required: required.has(name), schema: s }));
}

function operation(route: ApiRoute, names: Map<z.ZodType, string>): Record<string, unknown> {
  const where = `${route.method.toUpperCase()} ${route.path}`;
  const parameters: JsonSchema[] = [...route.path.matchAll(/:([A-Za-z0-9_]+)/g)].map((m) => ({
    name: m[1],
    in: 'path',
    required: true,
    schema: { type: 'string' },
  }));
  if (route.query) parameters.push(...queryParameters(route.query, where));

  const requestContent: Record<string, unknown> = {};
  if (route.body) requestContent['application/json'] = { schema: inputSchema(route.body) };
  if (route.multipart) requestContent['multipart/form-data'] = multipartSchema(route.multipart);

  const responses: Record<string, unknown> = {};
  for (const [status, r] of Object.entries(route.responses)) {
    const c = content(r.body, names, where);
    responses[status] = { description: r.description, ...(c ? { content: c } : {}) };
  }
  const errorRef = { 'application/json': { schema: { $ref: `${COMPONENT_REF}ApiError` } } };
  const standard: Record<number, string> = {};
  if (!route.public) {
    standard[401] = 'Not signed in.';
    standard[403] =
      route.method === 'get'
        ? 'The caller’s role may not do this.'
        : `The caller’s role may not do this, or the ${CSRF_HEADER} header is missing or out of date.`;
  }
  if (route.body || route.query || route.multipart) standard[422] = 'The input is not valid: every problem with its path.';
  standard[500] = 'Something went wrong on the server (logged; no details in the answer).';
  for (const [status, description] of Object.entries(standard)) if (!responses[status]) responses[status] = { description, content: errorRef };

  const stateChanging = route.method !== 'get';
  return {
    operationId: route.operationId,
    tags: [route.tag],
    summary: route.summary,
    ...(route.description ? { description: route.description } : {}),
    security: route.public ? [] : [stateChanging ? { session: [], csrf: [] } : { session: [] }],
    ...(parameters.length ? { parameters } : {}),
    ...(Object.keys(requestContent).length ? { requestBody: { required: !!route.body && !route.multipart, content: requestContent } } : {}),
    responses,
  };
}

/** Builds the document (pure: the same list gives the same document). */
export function buildOpenApiDocument(routes: readonly ApiRoute[] = API_ROUTES): Record<string, unknown> {
  const { schemas, names } = componentSchemas();
  const paths: Record<string, Record<string, unknown>> = {};
  const seen = new Set<string>();
  for (const route of routes) {
    const key = `${route.method} ${route.path}`;
    if (seen.has(key)) throw new Error(`${key} is listed twice in server/openapi/api-routes.ts.`);
    seen.add(key);
    (paths[openApiPath(route.path)] ??= {})[route.method] = operation(route, names);
  }
  return {
    openapi: '3.1.0',
    jsonSchemaDialect: 'https://json-schema.org/draft/2020-12/schema',
    info: {
      title: 'Plumbline API',
      version: packageJson.version,
      description:
        'Screening filed income-tax returns into a ranked, explainable examination queue. Staff sign in with POST /api/auth/login (a session cookie) and send the CSRF token it answers in the ' +
        `${CSRF_HEADER} header on every state-changing request. Money is decimal text, never a float. Scores select returns for a human look and prove nothing.`,
    },
    servers: [{ url: '/' }],
    tags: [...new Set(routes.map((r) => r.tag))].map((name) => ({ name })),
    paths,
    components: {
      schemas,
      securitySchemes: {
        session: { type: 'apiKey', in: 'cookie', name: SESSION_COOKIE, description: 'Set by POST /api/auth/login.' },
        csrf: { type: 'apiKey', in: 'header', name: CSRF_HEADER, description: 'The csrfToken answered by sign-in and GET /api/auth/me.' },
      },
    },
  };
}
