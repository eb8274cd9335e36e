/**
 * Signing in inside API tests: creates a user of a role in the test database and logs in
 * through the real route, returning a cookie-keeping agent and the CSRF token.
 */
import bcrypt from 'bcryptjs';
import { randomBytes } from 'node:crypto';
import request from 'supertest';
import type { Role } from '../../shared/roles';
import { User } from '../../server/users/user.entity';
import { createTestContext, type TestContext } from './test-app';

/** A signed-in test client. */
export interface SignedIn {
  agent: request.Agent;
  csrf: string;
  user: { id: string; username: string; role: Role };
  password: string;
}

// Hashing at cost 4 keeps tests quick; the server verifies any bcrypt cost.
const fastHash = (pw: string) => bcrypt.hash(pw, 4);

/** Creates a user (active, with a random password) and returns it with its password. */
export async function createUser(ctx: Pick<TestContext, 'dataSource'>, role: Role, username = `${role}-${randomBytes(3).toString('hex')}`) {
  const password = `pw-${randomBytes(8).toString('hex')}`;
  const repo = ctx.dataSource.getRepository(User);
  const user = await repo.save(repo.create({ username, displayName: `Test ${role}`, role, passwordHash: await fastHash(password), active: true }));
  return { user, password };
}

/** Creates a user of `role` and signs in. */
export async function signIn(ctx: TestContext, role: Role, username?: string): Promise<SignedIn> {
  const { user, password } = await createUser(ctx, role, username);
  const agent = request.agent(ctx.app);
  const res = await agent.post('/api/auth/login').send({ username: user.username, password });
  if (res.status !== 200) throw new Error(`test sign-in failed: ${res.status} ${JSON.stringify(res.body)}`);
  return { agent, csrf: res.body.csrfToken, user: { id: user.id, username: user.username, role }, password };
}

/** POSTs `body` as `who`, with the CSRF token the API asks of every change. */
export function postAs(who: SignedIn, path: string, body: object = {}): request.Test {
  return who.agent.post(path).set('X-CSRF-Token', who.csrf).send(body);
}

/**
 * A test context and one signed-in user of `role` for the enclosing describe block: made
 * before its tests and closed after them. Read `.ctx` and `.user` inside the tests.
 * @param overrides configuration for {@link createTestContext}
 */
export function signedInContext(role: Role, overrides: Record<string, string> = {}): { readonly ctx: TestContext; readonly user: SignedIn } {
  const s = {} as { ctx: TestContext; user: SignedIn };
  beforeAll(async () => {
    s.ctx = await createTestContext(overrides);
    s.user = await signIn(s.ctx, role);
  });
  afterAll(async () => {
    await s.ctx?.close();
  });
  return s;
}
