import { HttpError } from '../http/errors';
import type { Database } from '../../db/client';
import * as repo from '../repos/rate-limits';

/**
 * Failure-counting limiter for sign-in and password reset. Up to `free` failures pass; each further one locks the key
 * for base·2^(n−free) seconds, capped, so guessing slows down fast while a user an attacker targets is never locked
 * out for longer than the cap. Failures older than the window are forgotten; a success clears the key.
 */
export interface LimitPolicy {
  free: number;
  baseSeconds: number;
  capSeconds: number;
  windowSeconds: number;
}

export const POLICIES = {
  /** Per account: short cap, because anyone can fail on someone else's account. */
  loginAccount: { free: 5, baseSeconds: 2, capSeconds: 60, windowSeconds: 3600 },
  loginAddress: { free: 30, baseSeconds: 2, capSeconds: 900, windowSeconds: 3600 },
  resetAccount: { free: 3, baseSeconds: 30, capSeconds: 300, windowSeconds: 3600 },
  resetAddress: { free: 10, baseSeconds: 30, capSeconds: 900, windowSeconds: 3600 },
} satisfies Record<string, LimitPolicy>;

export function lockSeconds(failures: number, p: LimitPolicy): number {
  if (failures < p.free) return 0;
  return Math.min(p.capSeconds, p.baseSeconds * 2 ** (failures - p.free));
}

export interface LimitKey {
  key: string;
  policy: LimitPolicy;
}

export class RateLimiter {
  constructor(
    private readonly database: Database,
    private readonly now: () => Date,
  ) {}

  /** Throws 429 with Retry-After when any key is locked now. */
  async check(keys: LimitKey[]): Promise<void> {
    const rows = await repo.lockedUntil(this.database.db, keys.map((k) => k.key));
    const now = this.now().getTime();
    let wait = 0;
    for (const r of rows) if (r.lockedUntil && r.lockedUntil.getTime() > now) wait = Math.max(wait, r.lockedUntil.getTime() - now);
    if (wait > 0) {
      const seconds = Math.ceil(wait / 1000);
      throw new HttpError(
        429,
        'too_many_attempts',
        `Too many attempts. Try again in ${seconds} second${seconds === 1 ? '' : 's'}.`,
        { retryAfterSeconds: seconds },
        { 'Retry-After': String(seconds) },
      );
    }
  }

  async fail(keys: LimitKey[]): Promise<void> {
    const now = this.now();
    for (const { key, policy } of keys) {
      const windowStart = new Date(now.getTime() - policy.windowSeconds * 1000);
      const failures = await repo.countFailure(this.database.db, key, now, windowStart);
      const lock = lockSeconds(failures, policy);
      if (lock > 0) await repo.setLockedUntil(this.database.db, key, new Date(now.getTime() + lock * 1000));
    }
  }

  async succeed(keys: LimitKey[]): Promise<void> {
    await repo.clear(this.database.db, keys.map((k) => k.key));
  }
}
