/**
 * Every route the Express app has registered, against anonymous and each role:
 * 401 when signed out, 403 for a role without the right, neither for a role with it.
 * A route registered without an access rule fails here (and secureRouter refuses it at
 * start-up).
 */
import type { Express } from 'express';
import request from 'supertest';
import { ruleOf, type AccessRule } from '../../server/auth/access';
import { CAN } from '../../shared/permissions';
import { ROLES, type Role } from '../../shared/roles';
import { signIn, type SignedIn } from '../helpers/auth';
import { createTestContext, type TestContext } from '../helpers/test-app';

interface FoundRoute {
  method: string;
  path: string;
  rule: AccessRule | undefined;
}

/** Walks Express 5's router stacks (layers carry rawPath for mounts, route.path for routes). */
function listRoutes(app: Express): FoundRoute[] {
  const out: FoundRoute[] = [];
  const walk = (stack: any[], prefix: string) => {
    for (const layer of stack) {
      if (layer.route) {
        const first = layer.route.stack[0]?.handle;
        for (const m of Object.keys(layer.route.methods)) {
          if (m === '_all') continue;
          out.push({ method: m.toUpperCase(), path: prefix + layer.route.path, rule: ruleOf(first) });
        }
      } else if (layer.name === 'router' && layer.handle?.stack) {
        const mount = layer.rawPath && layer.rawPath !== '/' ? layer.rawPath : '';
        walk(layer.handle.stack, prefix + mount);
      }
    }
  };
  walk((app as any).router.stack, '');
  return out;
}

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
    await ctx.close();
  });

  it('the policy table matches docs/design.md#roles', () => {
    // Literal copy of the design's "who may do what", so a drift in shared/permissions.ts shows.
    expect(CAN).toEqual({
      uploadBatches: ['clerk'],
      readBatches: ['clerk', 'supervisor'],
      readCases: ['examiner', 'supervisor'],
      workCases: ['examiner', 'supervisor'],
      assignCases: ['supervisor'],
      exportQueue: ['supervisor'],
      readWorkload: ['supervisor'],
      editScoring: ['supervisor'],
      readScoring: ['examiner', 'supervisor'],
      analyse: ['examiner', 'supervisor'],
      manageUsers: ['admin'],
      readAccessLog: ['admin'],
    });
    // Admins see no taxpayer data: no capability on batches, cases, scoring or analyses.
    for (const [cap, roles] of Object.entries(CAN)) {
      if (!['manageUsers', 'readAccessLog'].includes(cap)) expect({ cap, admin: (roles as readonly string[]).includes('admin') }).toEqual({ cap, admin: false });
    }
  });

  it('finds the routes and every one carries an access rule', () => {
    expect(routes.length).toBeGreaterThan(5);
    expect(routes.map((r) => `${r.method} ${r.path}`)).toEqual(expect.arrayContaining(['GET /api/health', 'POST /api/auth/login', 'GET /api/users', 'GET /api/access-log']));
    const missing = routes.filter((r) => !r.rule).map((r) => `${r.method} ${r.path}`);
    expect(missing).toEqual([]);
  });

  it('answers 401 / 403 / allowed for every route and role', async () => {
    const concrete = (p: string) => p.replace(/:[A-Za-z]+/g, '00000000-0000-4000-8000-000000000000');
    // Sign-out ends the client's session, so it goes last.
    const ordered = [...routes].sort((a, b) => Number(a.path.endsWith('/logout')) - Number(b.path.endsWith('/logout')));
    const problems: string[] = [];
    for (const r of ordered) {
      const url = concrete(r.path);
      const m = r.method.toLowerCase() as 'get' | 'post' | 'put' | 'patch' | 'delete';
      const anon = await request(ctx.app)[m](url).send({});
      if (r.rule?.kind === 'public') {
        if ([401, 403].includes(anon.status)) problems.push(`${r.method} ${r.path} public but anonymous got ${anon.status}`);
        continue;
      }
      if (anon.status !== 401) problems.push(`${r.method} ${r.path} anonymous got ${anon.status}, want 401`);
      for (const role of ROLES) {
        const c = clients[role];
        const res = await c.agent[m](url).set('X-CSRF-Token', c.csrf).send({});
        const allowed = r.rule?.kind === 'roles' && r.rule.roles.includes(role);
        if (allowed && [401, 403].includes(res.status)) problems.push(`${r.method} ${r.path} ${role} allowed but got ${res.status}: ${JSON.stringify(res.body)}`);
        if (!allowed && res.status !== 403) problems.push(`${r.method} ${r.path} ${role} not allowed but got ${res.status}`);
      }
    }
    expect(problems).toEqual([]);
  });
});
