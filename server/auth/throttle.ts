/**
 * Sign-in throttling: failed attempts counted per account and per client address in a
 * sliding window. In memory, because one server process serves an office; a restart
 * clears it (documented in DEVELOPERS.md).
 *
 * Limits: 5 failures per account or 20 per address in 15 minutes (common practice, no
 * source; in line with the usual advice to limit online guessing).
 */

/** Throttle settings. */
export interface ThrottleLimits {
  perAccount: number;
  perAddress: number;
  windowMs: number;
}

export const DEFAULT_LIMITS: ThrottleLimits = { perAccount: 5, perAddress: 20, windowMs: 15 * 60 * 1000 };

/** Counts failures and tells when a key is locked. */
export class LoginThrottle {
  private failures = new Map<string, number[]>();

  constructor(
    private readonly limits: ThrottleLimits = DEFAULT_LIMITS,
    private readonly now: () => number = Date.now,
  ) {}

  private recent(key: string): number[] {
    const cutoff = this.now() - this.limits.windowMs;
    const list = (this.failures.get(key) ?? []).filter((t) => t > cutoff);
    if (list.length) this.failures.set(key, list);
    else this.failures.delete(key);
    return list;
  }

  /** Null when a sign-in may be tried; otherwise which limit holds and for how long. */
  check(username: string, address: string): { scope: 'account' | 'address'; retryAfterSeconds: number } | null {
    const accountWait = this.accountLockedFor(username);
    if (accountWait !== null) return { scope: 'account', retryAfterSeconds: accountWait };
    const addr = this.recent(`a:${address}`);
    if (addr.length >= this.limits.perAddress) return { scope: 'address', retryAfterSeconds: this.wait(addr) };
    return null;
  }

  private wait(list: number[]): number {
    return Math.max(1, Math.ceil((list[0] + this.limits.windowMs - this.now()) / 1000));
  }

  /**
   * Checks and, when allowed, counts the attempt as a failure at once, in one synchronous
   * step: a burst of parallel attempts cannot all pass the check before any is counted
   * (the password check takes ~60 ms). A success takes its count back with {@link succeed}.
   *
   * @returns null with the attempt counted, or which limit holds and for how long
   */
  begin(username: string, address: string): { scope: 'account' | 'address'; retryAfterSeconds: number } | { at: number } {
    const blocked = this.check(username, address);
    if (blocked) return blocked;
    const t = this.now();
    for (const key of [`u:${username.toLowerCase()}`, `a:${address}`]) this.failures.set(key, [...this.recent(key), t]);
    return { at: t };
  }

  /**
   * Seconds until an account may sign in again, or null when it is not locked: for the
   * administrator's list of users (issue 14). Address locks are not an account's.
   */
  accountLockedFor(username: string): number | null {
    const acc = this.recent(`u:${username.toLowerCase()}`);
    return acc.length >= this.limits.perAccount ? this.wait(acc) : null;
  }

  /**
   * Clears an account's failed attempts (an administrator unlocks it). Its address count stays:
   * that limit is against guessing across many accounts from one place.
   * @returns true when the account was locked
   */
  unlockAccount(username: string): boolean {
    const locked = this.accountLockedFor(username) !== null;
    this.failures.delete(`u:${username.toLowerCase()}`);
    return locked;
  }

  /** A successful sign-in clears the account's count and takes back this attempt from the address's. */
  succeed(username: string, address: string, at: number): void {
    this.failures.delete(`u:${username.toLowerCase()}`);
    const list = this.failures.get(`a:${address}`);
    if (list) {
      const i = list.lastIndexOf(at);
      if (i >= 0) list.splice(i, 1);
    }
  }
}
