/**
 * Every route the Express app has registered, against anonymous and each role, compared with
 * the table below: who may call each route, written out here by hand from docs/design.md#roles
 * and NOT taken from the route's own rule, so a route given the wrong capability fails here.
 * 401 when signed out, 403 for a role the table does not name, neither for a role it names.
 * A route missing from the table, or listed but not registered, fails too.
 */
import request from 'supertest';
import { CAN } from '../../shared/permissions';
import { ROLES, type Role } from '../../shared/roles';
import { signIn, type SignedIn } from '../helpers/auth';
import { listRoutes, type FoundRoute } from '../helpers/registered-routes';
import { createTestContext, type TestContext } from '../helpers/test-app';

// Signing in four users and calling every route five times takes a while on a busy machine.
jest.setTimeout(180_000);

/** Anyone, signed in or not. */
const PUBLIC = 'public';
const STAFF: readonly Role[] = ['clerk', 'examiner', 'supervisor', 'admin'];
const CASE_WORK: readonly Role[] = ['examiner', 'supervisor'];
const SUPERVISOR: readonly Role[] = ['supervisor'];
const ADMIN: readonly Role[] = ['admin'];
const BATCH_READERS: readonly Role[] = ['clerk', 'supervisor'];

/** Route → the roles allowed to call it (need-to-know: admins see no taxpayer data). */
const EXPECTED: Record<string, typeof PUBLIC | readonly Role[]> = {
  'GET /api/health': PUBLIC,
  'GET /api/openapi.json': PUBLIC,
  'POST /api/auth/login': PUBLIC,
  'POST /api/auth/logout': STAFF,
  'GET /api/auth/me': STAFF,
  // A taxpayer's one-time reply link: the token is the key.
  'GET /api/replies/:token': PUBLIC,
  'POST /api/replies/:token': PUBLIC,

  'GET /api/users': ADMIN,
  'POST /api/users': ADMIN,
  'PATCH /api/users/:id': ADMIN,
  'POST /api/users/:id/password': ADMIN,
  'POST /api/users/:id/unlock': ADMIN,
  'GET /api/access-log': ADMIN,
  'GET /api/access-log/export.xlsx': ADMIN,

  'POST /api/batches': ['clerk'],
  'GET /api/batches': BATCH_READERS,
  'GET /api/batches/:id': BATCH_READERS,
  'GET /api/batches/:id/report.xlsx': BATCH_READERS,
  'POST /api/batches/:id/retry': ['clerk'],
  'POST /api/batches/:id/rescore': SUPERVISOR,

  'POST /api/analyses/digits': CASE_WORK,
  'POST /api/analyses/digits/pool': CASE_WORK,
  'GET /api/analyses/pools': CASE_WORK,
  'POST /api/cases/:id/analyses': CASE_WORK,
  'GET /api/cases/:id/analyses': CASE_WORK,
  'GET /api/cases/:id/analyses/:analysisId/pdf': CASE_WORK,
  'GET /api/cases/:id/analyses/:analysisId/xlsx': CASE_WORK,
  'POST /api/cases/:id/reconciliation': CASE_WORK,
  'GET /api/scoring/profiles': CASE_WORK,
  'POST /api/scoring/profiles': SUPERVISOR,
  'POST /api/scoring/profiles/:version/activate': SUPERVISOR,
  'GET /api/scoring/performance': SUPERVISOR,
  'POST /api/scoring/preview': SUPERVISOR,

  'GET /api/cases': CASE_WORK,
  'GET /api/cases/export.xlsx': SUPERVISOR,
  'POST /api/cases/reassign': SUPERVISOR,
  'GET /api/examiners': CASE_WORK,
  'GET /api/workload': SUPERVISOR,
  'GET /api/needs-me': CASE_WORK,
  'GET /api/saved-views': CASE_WORK,
  'POST /api/saved-views': CASE_WORK,
  'DELETE /api/saved-views/:id': CASE_WORK,
  'POST /api/housekeeping/run': SUPERVISOR,
  'GET /api/programme/outcomes': SUPERVISOR,
  'GET /api/programme/controls': SUPERVISOR,
  'GET /api/cases/:id': CASE_WORK,
  'POST /api/cases/:id/claim': CASE_WORK,
  'POST /api/cases/:id/assign': SUPERVISOR,
  'POST /api/cases/:id/reopen': SUPERVISOR,
  'POST /api/cases/:id/transition': CASE_WORK,
  'POST /api/cases/:id/notes': CASE_WORK,
  'POST /api/cases/:id/reveal-tin': CASE_WORK,
  'POST /api/cases/:id/document-requests': CASE_WORK,
  'GET /api/cases/:id/letter-context': CASE_WORK,
  'POST /api/cases/:id/document-requests/preview': CASE_WORK,
  'POST /api/cases/:id/closing-letter/preview': CASE_WORK,
  'POST /api/cases/:id/referral': CASE_WORK,
  'POST /api/cases/:id/referral/preview': CASE_WORK,
  'GET /api/cases/:id/letters': CASE_WORK,
  'GET /api/cases/:id/letters/:letterId/pdf': CASE_WORK,
  'GET /api/cases/:id/reply-uploads/:uploadId': CASE_WORK,
};

const key = (r: FoundRoute) => `${r.method} ${r.path}`;

describe('route × role policy', () => {
  let ctx: TestContext;
  const clients = {} as Record<Role, SignedIn>;
  let routes: FoundRoute[];

  beforeAll(async () => {
    ctx = await createTestContext();
    for (const role of ROLES) clients[role] = await signIn(ctx, role);
    routes = listRoutes(ctx.app);
  });
  afterAll(async () => {
    await ctx?.close();
  });

  it('the policy table matches docs/design.md#roles', () => {
    // Literal copy of the design's "who may do what", so a drift in shared/permissions.ts shows.
    expect(CAN).toEqual({
      uploadBatches: ['clerk'],
      readBatches: ['clerk', 'supervisor'],
      readCases: ['examiner', 'supervisor'],
      workCases: ['examiner', 'supervisor'],
      assignCases: ['supervisor'],
      reopenCases: ['supervisor'],
      exportQueue: ['supervisor'],
      readWorkload: ['supervisor'],
      readProgramme: ['supervisor'],
      runHousekeeping: ['supervisor'],
      editScoring: ['supervisor'],
      readScoring: ['examiner', 'supervisor'],
      analyse: ['examiner', 'supervisor'],
      manageUsers: ['admin'],
      readAccessLog: ['admin'],
    });
    // Admins see no taxpayer data: no capability on batches, cases, scoring or analyses.
    for (const [cap, roles] of Object.entries(CAN)) {
      if (!['manageUsers', 'readAccessLog'].includes(cap))
        expect({ cap, admin: (roles as readonly string[]).includes('admin') }).toEqual({ cap, admin: false });
    }
  });

  it('every registered route is in the table, every table entry is registered, and each carries an access rule', () => {
    expect(routes.length).toBeGreaterThan(5);
    const registered = routes.map(key);
    expect({ notInTable: registered.filter((k) => !(k in EXPECTED)), notRegistered: Object.keys(EXPECTED).filter((k) => !registered.includes(k)) }).toEqual({
      notInTable: [],
      notRegistered: [],
    });
    expect(routes.filter((r) => !r.rule).map(key)).toEqual([]);
  });

  it('each route’s own rule names exactly the roles in the table', () => {
    const wrong: string[] = [];
    for (const r of routes) {
      const want = EXPECTED[key(r)];
      if (!want) continue;
      const has = r.rule?.kind === 'public' ? PUBLIC : r.rule?.kind === 'roles' ? [...r.rule.roles].sort().join(',') : 'none';
      const expected = want === PUBLIC ? PUBLIC : [...want].sort().join(',');
      if (has !== expected) wrong.push(`${key(r)}: route allows ${has}, table says ${expected}`);
    }
    expect(wrong).toEqual([]);
  });

  it('answers 401 / 403 / allowed for every route and role as the table says', async () => {
    const concrete = (p: string) => p.replace(/:[A-Za-z]+/g, '00000000-0000-4000-8000-000000000000');
    // Sign-out ends the client's session, so it goes last.
    const ordered = [...routes].sort((a, b) => Number(a.path.endsWith('/logout')) - Number(b.path.endsWith('/logout')));
    const problems: string[] = [];
    for (const r of ordered) {
      const want = EXPECTED[key(r)];
      if (!want) {
        problems.push(`${key(r)} is not in the table`);
        continue;
      }
      const url = concrete(r.path);
      const m = r.method.toLowerCase() as 'get' | 'post' | 'put' | 'patch' | 'delete';
      const anon = await request(ctx.app)[m](url).send({});
      if (want === PUBLIC) {
        if ([401, 403].includes(anon.status)) problems.push(`${key(r)} public but anonymous got ${anon.status}`);
        continue;
      }
      if (anon.status !== 401) problems.push(`${key(r)} anonymous got ${anon.status}, want 401`);
      for (const role of ROLES) {
        const c = clients[role];
        const res = await c.agent[m](url).set('X-CSRF-Token', c.csrf).send({});
        const allowed = want.includes(role);
        if (allowed && [401, 403].includes(res.status)) problems.push(`${key(r)} ${role} allowed but got ${res.status}: ${JSON.stringify(res.body)}`);
        if (!allowed && res.status !== 403) problems.push(`${key(r)} ${role} not allowed but got ${res.status}`);
      }
    }
    expect(problems).toEqual([]);
  });
});
