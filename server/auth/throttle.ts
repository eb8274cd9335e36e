/**
 * Sign-in throttling: failed attempts counted per account and per client address in a
 * window, kept in PostgreSQL (table `login_throttle`), so the limits hold across several
 * server processes and across restarts (issue 16; docs/operations.md#several-server-processes).
 *
 * Limits: 5 failures per account or 20 per address in 15 minutes (common practice, no
 * source; in line with the usual advice to limit online guessing).
 *
 * The counting is rate-limiter-flexible's (npm, RateLimiterPostgres: points consumed per key,
 * refused past the limit, reward, get, delete). Its own PostgreSQL statements take the time
 * from the process's clock (Date.now()), which is not the office clock that tests move
 * (server/clock.ts). So {@link OfficeClockLimiter} subclasses RateLimiterPostgres and replaces
 * only its storage steps (`_upsert`, `_get`, `_delete`, `_getRateLimiterRes`) with the
 * statements of server/auth/throttle.repository.ts, fed with the office clock. The table
 * comes from a migration (the package is told it exists and never creates one).
 *
 * A window is fixed, not sliding: it starts with the first failure and every failure inside
 * it counts until it ends; then the count starts again. So five failures lock an account
 * until 15 minutes after the first of them.
 */
import { RateLimiterPostgres, RateLimiterRes } from 'rate-limiter-flexible';
import type { DataSource } from 'typeorm';
import { now as officeNow } from '../clock';
import { addThrottlePoints, deleteExpiredThrottleCounts, deleteThrottleCount, findThrottleCount, type ThrottleCount } from './throttle.repository';

/** Throttle settings. */
export interface ThrottleLimits {
  perAccount: number;
  perAddress: number;
  windowMs: number;
}

export const DEFAULT_LIMITS: ThrottleLimits = { perAccount: 5, perAddress: 20, windowMs: 15 * 60 * 1000 };

/** Which limit holds and for how long. */
export interface ThrottleBlock {
  scope: 'account' | 'address';
  retryAfterSeconds: number;
}

/** An attempt that was let through and counted (a success takes it back with {@link LoginThrottle.succeed}). */
export interface ThrottleAttempt {
  counted: true;
}

/**
 * rate-limiter-flexible's PostgreSQL limiter with the office clock as its time source and the
 * repository's statements as its storage. The package's counting rules (refuse when the
 * count passes `points`, windows of `duration` seconds) are unchanged.
 */
class OfficeClockLimiter extends RateLimiterPostgres {
  constructor(
    private readonly db: DataSource,
    private readonly clock: () => number,
    opts: { keyPrefix: string; points: number; windowMs: number },
  ) {
    super({
      storeClient: db,
      storeType: 'typeorm',
      tableName: 'login_throttle',
      // The table comes from a migration; the package's own clean-up timer uses Date.now()
      // (LoginThrottle prunes by the office clock instead).
      tableCreated: true,
      clearExpiredByTimeout: false,
      keyPrefix: opts.keyPrefix,
      points: opts.points,
      duration: opts.windowMs / 1000,
    });
  }

  /** Storage step of consume/reward: one UPSERT ... RETURNING, so the count is taken atomically. */
  _upsert(key: string, points: number, msDuration: number, forceExpire = false): Promise<ThrottleCount> {
    const t = this.clock();
    return addThrottlePoints(this.db, key, points, msDuration > 0 ? t + msDuration : null, t, forceExpire);
  }

  _get(key: string): Promise<ThrottleCount | null> {
    return findThrottleCount(this.db, key, this.clock());
  }

  _delete(key: string): Promise<boolean> {
    return deleteThrottleCount(this.db, key);
  }

  /** As the package's own, with the time left measured on the office clock. */
  _getRateLimiterRes(_key: string, changedPoints: number, row: ThrottleCount): RateLimiterRes {
    const isFirst = changedPoints === row.points;
    const consumed = isFirst ? changedPoints : row.points;
    const msBeforeNext = row.expire === null ? -1 : Math.max(row.expire - this.clock(), 0);
    return new RateLimiterRes(Math.max(this.points - consumed, 0), msBeforeNext, consumed, isFirst);
  }

  /** The package's clean-up, by the office clock. */
  clearExpired(beforeMs: number): Promise<number> {
    return deleteExpiredThrottleCounts(this.db, beforeMs);
  }
}

/** Whole seconds, at least 1, for Retry-After and messages. */
function seconds(ms: number): number {
  return Math.max(1, Math.ceil(ms / 1000));
}

/** A refusal by the limiter (a RateLimiterRes), as opposed to a failure of the database. */
function refusal(e: unknown): RateLimiterRes | null {
  return e instanceof RateLimiterRes ? e : null;
}

/** Counts failures in PostgreSQL and tells when a key is locked. */
export class LoginThrottle {
  private readonly accounts: OfficeClockLimiter;
  private readonly addresses: OfficeClockLimiter;
  private lastPruneMs = -Infinity;

  /**
   * @param dataSource the server's connection (application role)
   * @param now the office clock in ms; tests pass their own to control time
   */
  constructor(
    dataSource: DataSource,
    private readonly limits: ThrottleLimits = DEFAULT_LIMITS,
    private readonly now: () => number = () => officeNow().getTime(),
  ) {
    this.accounts = new OfficeClockLimiter(dataSource, now, { keyPrefix: 'u', points: limits.perAccount, windowMs: limits.windowMs });
    this.addresses = new OfficeClockLimiter(dataSource, now, { keyPrefix: 'a', points: limits.perAddress, windowMs: limits.windowMs });
  }

  /**
   * Checks and, when allowed, counts the attempt as a failure at once: each count is one
   * UPSERT ... RETURNING in PostgreSQL, so a burst of parallel attempts, in this process or
   * in several, cannot all pass before any is counted (the password check takes ~60 ms). An
   * attempt refused for its account is not counted against its address; one refused for its
   * address is taken back from its account. A success takes its count back with
   * {@link succeed}.
   *
   * @returns the attempt, counted, or which limit holds and for how long
   * @throws when PostgreSQL cannot be reached (the sign-in then fails with a 500)
   */
  async begin(username: string, address: string): Promise<ThrottleBlock | ThrottleAttempt> {
    await this.pruneNowAndThen();
    const account = username.toLowerCase();
    try {
      await this.accounts.consume(account);
    } catch (e) {
      const r = refusal(e);
      if (!r) throw e;
      return { scope: 'account', retryAfterSeconds: seconds(r.msBeforeNext) };
    }
    try {
      await this.addresses.consume(address);
    } catch (e) {
      const r = refusal(e);
      if (!r) throw e;
      await this.accounts.reward(account);
      return { scope: 'address', retryAfterSeconds: seconds(r.msBeforeNext) };
    }
    return { counted: true };
  }

  /**
   * Seconds until an account may sign in again, or null when it is not locked: for the
   * administrator's list of users (issue 14). Address locks are not an account's.
   */
  async accountLockedFor(username: string): Promise<number | null> {
    const r = await this.accounts.get(username.toLowerCase());
    return r && r.consumedPoints >= this.limits.perAccount ? seconds(r.msBeforeNext) : null;
  }

  /**
   * Clears an account's failed attempts (an administrator unlocks it). Its address count stays:
   * that limit is against guessing across many accounts from one place.
   * @returns true when the account was locked
   */
  async unlockAccount(username: string): Promise<boolean> {
    const locked = (await this.accountLockedFor(username)) !== null;
    await this.accounts.delete(username.toLowerCase());
    return locked;
  }

  /** A successful sign-in clears the account's count and takes back this attempt from the address's. */
  async succeed(username: string, address: string): Promise<void> {
    await this.accounts.delete(username.toLowerCase());
    await this.addresses.reward(address);
  }

  /**
   * Removes counts whose window has ended, at most once a window per process: they count for
   * nothing, and without this every address ever seen would keep a row.
   */
  private async pruneNowAndThen(): Promise<void> {
    const t = this.now();
    if (t - this.lastPruneMs < this.limits.windowMs) return;
    this.lastPruneMs = t;
    await this.accounts.clearExpired(t);
  }
}
