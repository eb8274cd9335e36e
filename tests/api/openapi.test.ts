/**
 * The OpenAPI document (`GET /api/openapi.json`, server/openapi/): it names every route the
 * app has registered and no other; each operation says whether it needs a session as the
 * route's own access rule does; its schemas are valid JSON Schema 2020-12; and real answers
 * of the main routes match the schema the document gives for their status.
 *
 * Answers are checked with ajv (JSON Schema 2020-12, the dialect of OpenAPI 3.1,
 * https://spec.openapis.org/oas/v3.1.0#schema-object) against the served document itself, not
 * the zod schemas it was made from, so a fault in the conversion shows too.
 */
import Ajv2020, { type ValidateFunction } from 'ajv/dist/2020';
import addFormats from 'ajv-formats';
import request from 'supertest';
import { API_ROUTES } from '../../server/openapi/api-routes';
import { buildOpenApiDocument, openApiPath } from '../../server/openapi/openapi-document';
import { signIn, type SignedIn } from '../helpers/auth';
import { listRoutes, type FoundRoute } from '../helpers/registered-routes';
import { loadScoredBatch, type LoadedBatch } from '../helpers/scored-batch';
import { createTestContext, type TestContext } from '../helpers/test-app';

jest.setTimeout(180_000);

type Doc = { openapi: string; paths: Record<string, Record<string, Operation>>; components: { schemas: Record<string, object> } };
type Operation = { security: object[]; responses: Record<string, { content?: Record<string, { schema: object }> }> };

/** Registered routes that the document lacks, and documented operations no route answers. */
function compare(routes: FoundRoute[], doc: Doc): { missing: string[]; extra: string[] } {
  const registered = new Set(routes.map((r) => `${r.method.toLowerCase()} ${openApiPath(r.path)}`));
  const documented = new Set(Object.entries(doc.paths).flatMap(([p, ops]) => Object.keys(ops).map((m) => `${m} ${p}`)));
  return { missing: [...registered].filter((k) => !documented.has(k)).sort(), extra: [...documented].filter((k) => !registered.has(k)).sort() };
}

describe('the OpenAPI document', () => {
  let ctx: TestContext;
  let doc: Doc;
  let routes: FoundRoute[];
  let batch: LoadedBatch;
  let clerk: SignedIn;
  let examiner: SignedIn;
  let supervisor: SignedIn;
  const ajv = new Ajv2020({ allErrors: true, strict: false });
  addFormats(ajv);

  /** The validator of the JSON answer the document gives for a route and status. */
  function documented(method: string, path: string, status: number): ValidateFunction {
    const op = doc.paths[path]?.[method];
    if (!op) throw new Error(`${method.toUpperCase()} ${path} is not in the document`);
    const schema = op.responses[String(status)]?.content?.['application/json']?.schema;
    if (!schema) throw new Error(`${method.toUpperCase()} ${path} documents no JSON answer for ${status}`);
    const pointer = `/paths/${path.replace(/~/g, '~0').replace(/\//g, '~1')}/${method}/responses/${status}/content/application~1json/schema`;
    return ajv.getSchema(`openapi.json#${pointer}`) ?? ajv.compile({ $ref: `openapi.json#${pointer}` });
  }

  /** Fails with every difference when `body` is not what the document says for the answer. */
  function expectDocumented(method: string, path: string, res: request.Response) {
    const validate = documented(method, path, res.status);
    const ok = validate(res.body);
    expect({ route: `${method.toUpperCase()} ${path} → ${res.status}`, errors: ok ? [] : validate.errors }).toEqual({
      route: `${method.toUpperCase()} ${path} → ${res.status}`,
      errors: [],
    });
  }

  beforeAll(async () => {
    ctx = await createTestContext();
    batch = await loadScoredBatch(ctx.dataSource, { seed: 'openapi', returns: 120, plantShare: 0.1 });
    clerk = await signIn(ctx, 'clerk');
    examiner = await signIn(ctx, 'examiner');
    supervisor = await signIn(ctx, 'supervisor');
    routes = listRoutes(ctx.app);
    const res = await request(ctx.app).get('/api/openapi.json');
    expect(res.status).toBe(200);
    doc = res.body as Doc;
    ajv.addSchema(doc, 'openapi.json');
  });
  afterAll(async () => {
    await ctx?.close();
  });

  it('is served to anyone as OpenAPI 3.1 JSON', async () => {
    const res = await request(ctx.app).get('/api/openapi.json');
    expect(res.status).toBe(200);
    expect(res.type).toBe('application/json');
    expect(doc.openapi).toBe('3.1.0');
    expect(doc.paths['/api/cases/{id}']?.get).toBeDefined();
  });

  it('lists every registered route and no route that is not registered', () => {
    expect(routes.length).toBeGreaterThan(30);
    expect(compare(routes, doc)).toEqual({ missing: [], extra: [] });
  });

  it('would notice a route left out of the list (the check above can fail)', () => {
    const without = buildOpenApiDocument(API_ROUTES.filter((r) => !(r.method === 'get' && r.path === '/api/workload'))) as unknown as Doc;
    expect(compare(routes, without).missing).toEqual(['get /api/workload']);
  });

  it('asks for a session exactly where the route’s own access rule does', () => {
    const wrong = routes
      .filter((r) => {
        const op = doc.paths[openApiPath(r.path)]?.[r.method.toLowerCase()];
        const open = op ? op.security.length === 0 : undefined;
        return open !== (r.rule?.kind === 'public');
      })
      .map((r) => `${r.method} ${r.path} (rule ${r.rule?.kind})`);
    expect(wrong).toEqual([]);
  });

  it('holds only valid JSON Schema 2020-12, every $ref resolving', () => {
    const problems: string[] = [];
    for (const [name, schema] of Object.entries(doc.components.schemas)) {
      // Against the 2020-12 meta-schema, then compiled (which resolves its $refs).
      if (!ajv.validateSchema(schema)) problems.push(`${name}: ${ajv.errorsText(ajv.errors)}`);
      try {
        ajv.getSchema(`openapi.json#/components/schemas/${name}`);
      } catch (e) {
        problems.push(`${name}: ${(e as Error).message}`);
      }
    }
    expect(problems).toEqual([]);
  });

  it('describes the answers of sign-in, me and health', async () => {
    const login = await request(ctx.app).post('/api/auth/login').send({ username: clerk.user.username, password: clerk.password });
    expect(login.status).toBe(200);
    expectDocumented('post', '/api/auth/login', login);

    const refused = await request(ctx.app).post('/api/auth/login').send({ username: clerk.user.username, password: 'not-the-password' });
    expect(refused.status).toBe(401);
    expectDocumented('post', '/api/auth/login', refused);

    const invalid = await request(ctx.app).post('/api/auth/login').send({ username: '' });
    expect(invalid.status).toBe(422);
    expectDocumented('post', '/api/auth/login', invalid);

    const me = await examiner.agent.get('/api/auth/me');
    expect(me.status).toBe(200);
    expectDocumented('get', '/api/auth/me', me);

    const anonymous = await request(ctx.app).get('/api/auth/me');
    expect(anonymous.status).toBe(401);
    expectDocumented('get', '/api/auth/me', anonymous);

    const health = await request(ctx.app).get('/api/health');
    expect([200, 503]).toContain(health.status);
    expectDocumented('get', '/api/health', health);
  });

  it('describes the answers of the queue, a case, the batches and the workload', async () => {
    const list = await examiner.agent.get('/api/cases?pageSize=5');
    expect(list.status).toBe(200);
    expect(list.body.items.length).toBeGreaterThan(0);
    expectDocumented('get', '/api/cases', list);

    const detail = await examiner.agent.get(`/api/cases/${list.body.items[0].id}`);
    expect(detail.status).toBe(200);
    expectDocumented('get', '/api/cases/{id}', detail);

    const batches = await clerk.agent.get('/api/batches');
    expect(batches.status).toBe(200);
    expect(batches.body.items.map((b: { id: string }) => b.id)).toContain(batch.batchId);
    expectDocumented('get', '/api/batches', batches);

    const one = await supervisor.agent.get(`/api/batches/${batch.batchId}`);
    expect(one.status).toBe(200);
    expectDocumented('get', '/api/batches/{id}', one);

    const claimed = await examiner.agent.post(`/api/cases/${list.body.items[0].id}/claim`).set('X-CSRF-Token', examiner.csrf).send({});
    expect(claimed.status).toBe(200);
    expectDocumented('post', '/api/cases/{id}/claim', claimed);

    const workload = await supervisor.agent.get('/api/workload');
    expect(workload.status).toBe(200);
    expect(workload.body.examiners.length).toBeGreaterThan(0);
    expectDocumented('get', '/api/workload', workload);

    const examiners = await supervisor.agent.get('/api/examiners');
    expectDocumented('get', '/api/examiners', examiners);
    const profiles = await supervisor.agent.get('/api/scoring/profiles');
    expectDocumented('get', '/api/scoring/profiles', profiles);
    const forbidden = await clerk.agent.get('/api/workload');
    expect(forbidden.status).toBe(403);
    expectDocumented('get', '/api/workload', forbidden);
  });

  it('rejects an answer that strays from the document (the checks above can fail)', async () => {
    const res = await examiner.agent.get('/api/cases?pageSize=1');
    const validate = documented('get', '/api/cases', 200);
    expect(validate(res.body)).toBe(true);
    expect(validate({ ...res.body, extra: true })).toBe(false);
    expect(validate({ ...res.body, items: [{ ...res.body.items[0], riskScore: '12.5' }] })).toBe(false);
  });
});
