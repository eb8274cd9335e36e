/**
 * The sign-in throttle kept in PostgreSQL (issue 16): counts taken atomically across several
 * throttles on one database (as several server processes would hold), windows measured on the
 * office clock (server/clock.ts), counts that outlive the throttle that made them (a restart),
 * and the bookkeeping between the account and the address limits.
 */
import { LoginThrottle } from '../../server/auth/throttle';
import { advanceClockDays, resetClock } from '../../server/clock';
import { createTestContext, type TestContext } from '../helpers/test-app';

const MINUTE_IN_DAYS = 1 / (24 * 60);

describe('sign-in throttle in PostgreSQL', () => {
  let ctx: TestContext;
  beforeAll(async () => {
    ctx = await createTestContext();
  });
  afterAll(async () => {
    resetClock();
    await ctx.close();
  });
  afterEach(() => resetClock());

  it('lets exactly the limit through when a burst is shared between two throttles on one database', async () => {
    const one = new LoginThrottle(ctx.dataSource);
    const two = new LoginThrottle(ctx.dataSource);
    const answers = await Promise.all(Array.from({ length: 12 }, (_, i) => (i % 2 ? one : two).begin('burst-both', `10.1.0.${i}`)));
    // 5 per account (server/auth/throttle.ts DEFAULT_LIMITS): the rest are refused for the account.
    expect(answers.filter((a) => 'counted' in a)).toHaveLength(5);
    expect(answers.filter((a) => 'scope' in a && a.scope === 'account')).toHaveLength(7);
    expect(await two.accountLockedFor('BURST-BOTH')).toBeGreaterThan(14 * 60);
  });

  it('keeps a lock made by one throttle for a new one (a restarted process), until the office clock passes the window', async () => {
    const before = new LoginThrottle(ctx.dataSource);
    for (let i = 0; i < 5; i++) expect(await before.begin('restarted', '10.2.0.1')).toEqual({ counted: true });
    const after = new LoginThrottle(ctx.dataSource);
    const blocked = await after.begin('restarted', '10.2.0.2');
    expect(blocked).toEqual({ scope: 'account', retryAfterSeconds: expect.any(Number) });
    expect('scope' in blocked && blocked.retryAfterSeconds).toBeGreaterThan(14 * 60);
    expect('scope' in blocked && blocked.retryAfterSeconds).toBeLessThanOrEqual(15 * 60);
    advanceClockDays(14 * MINUTE_IN_DAYS);
    expect(await after.begin('restarted', '10.2.0.3')).toMatchObject({ scope: 'account' });
    advanceClockDays(1.1 * MINUTE_IN_DAYS);
    expect(await after.accountLockedFor('restarted')).toBeNull();
    expect(await after.begin('restarted', '10.2.0.4')).toEqual({ counted: true });
  });

  it('does not count an attempt refused for its address against its account, and a success takes its attempt back', async () => {
    let now = 5_000_000;
    const t = new LoginThrottle(ctx.dataSource, { perAccount: 3, perAddress: 2, windowMs: 60_000 }, () => now);
    expect(await t.begin('addr-a', '10.3.0.1')).toEqual({ counted: true });
    expect(await t.begin('addr-b', '10.3.0.1')).toEqual({ counted: true });
    // The address is full: refused for it, and addr-c's own count stays at nothing.
    expect(await t.begin('addr-c', '10.3.0.1')).toEqual({ scope: 'address', retryAfterSeconds: 60 });
    for (let i = 0; i < 3; i++) expect(await t.begin('addr-c', `10.3.1.${i}`)).toEqual({ counted: true });
    expect(await t.accountLockedFor('addr-c')).toBe(60);
    // A success on another address clears its account and gives its address the attempt back.
    expect(await t.begin('addr-d', '10.3.2.1')).toEqual({ counted: true });
    await t.succeed('addr-d', '10.3.2.1');
    expect(await t.begin('addr-e', '10.3.2.1')).toEqual({ counted: true });
    expect(await t.begin('addr-f', '10.3.2.1')).toEqual({ counted: true });
    expect(await t.begin('addr-g', '10.3.2.1')).toMatchObject({ scope: 'address' });
    // Unlocking forgets the account's count at once.
    expect(await t.unlockAccount('addr-c')).toBe(true);
    expect(await t.accountLockedFor('addr-c')).toBeNull();
    expect(await t.unlockAccount('addr-c')).toBe(false);
    now += 61_000;
    expect(await t.begin('addr-h', '10.3.0.1')).toEqual({ counted: true });
  });

  it('removes counts whose window has ended', async () => {
    let now = 9_000_000;
    const t = new LoginThrottle(ctx.dataSource, { perAccount: 3, perAddress: 5, windowMs: 60_000 }, () => now);
    await t.begin('pruned', '10.4.0.1');
    const keys = async () => (await ctx.dataSource.query(`SELECT key FROM login_throttle WHERE key IN ('u:pruned', 'a:10.4.0.1')`)).length;
    expect(await keys()).toBe(2);
    now += 120_000;
    await t.begin('other', '10.4.0.2');
    expect(await keys()).toBe(0);
  });
});
