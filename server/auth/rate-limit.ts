import type { Redis } from 'ioredis';
import { RateLimiterMemory, RateLimiterRedis, RateLimiterRes, type RateLimiterAbstract } from 'rate-limiter-flexible';
import { tooManyRequests } from '@server/errors';

/** Limits for one kind of attempt: `points` attempts per `durationS` seconds per key. */
export type AttemptLimit = { points: number; durationS: number };

/**
 * Counts attempts per key (an address or an account) with rate-limiter-flexible: in memory in the
 * single-process mode (a restart forgets the counts), in Redis in the multi-instance mode, so an
 * attempt on one instance counts on every other.
 */
export interface AttemptLimiter {
  /** Counts one attempt for `key`; throws 429 with Retry-After once the key is over its limit. */
  consume(key: string): Promise<void>;
  /** Throws 429 with Retry-After when `key` is already over its limit, without counting. */
  check(key: string): Promise<void>;
  /** Forgets `key` (e.g. after a successful sign-in). */
  reset(key: string): Promise<void>;
}

function retryAfterS(res: RateLimiterRes): number {
  return Math.max(1, Math.ceil(res.msBeforeNext / 1000));
}

/**
 * The counter behind a limiter: in memory, or with `redis` in Redis (rate-limiter-flexible's
 * RateLimiterRedis, one atomic script per attempt), keys prefixed `seisift-`. While Redis is away
 * the Redis counter answers at once (`rejectIfRedisNotReady`) and its in-memory insurance limiter
 * counts instead, so a sign-in never fails with 500 for want of Redis (the counts are then per
 * instance until Redis is back).
 */
function counter(points: number, durationS: number, keyPrefix: string, redis?: Redis): RateLimiterAbstract {
  const memory = new RateLimiterMemory({ points, duration: durationS, keyPrefix });
  if (!redis) return memory;
  return new RateLimiterRedis({ storeClient: redis, points, duration: durationS, keyPrefix: `seisift-${keyPrefix}`, rejectIfRedisNotReady: true, insuranceLimiter: memory });
}

/** Builds an attempt limiter (in Redis when `redis` is given). Keys are lower-cased and trimmed. */
export function createAttemptLimiter(limit: AttemptLimit, keyPrefix: string, redis?: Redis): AttemptLimiter {
  const limiter = counter(limit.points, limit.durationS, keyPrefix, redis);
  const norm = (key: string) => key.trim().toLowerCase();
  return {
    async consume(key) {
      try {
        await limiter.consume(norm(key));
      } catch (err) {
        if (err instanceof RateLimiterRes) throw tooManyRequests(retryAfterS(err));
        throw err;
      }
    },
    async check(key) {
      const res = await limiter.get(norm(key));
      if (res && res.consumedPoints >= limit.points) throw tooManyRequests(retryAfterS(res));
    },
    async reset(key) {
      await limiter.delete(norm(key));
    },
  };
}

/**
 * Counts failures per key without ever refusing: the per-account slow-down reads how many failed
 * sign-ins an account had within the window to choose a delay (`progressiveDelayMs`).
 */
export interface FailureCounter {
  /** Failures (and attempts still in progress) counted for `key` within the window. */
  count(key: string): Promise<number>;
  /** Counts one more for `key`. */
  add(key: string): Promise<void>;
  /** Takes one back (an attempt counted in advance that succeeded). */
  remove(key: string): Promise<void>;
}

/** Builds a failure counter over a window of `durationS` seconds (in Redis when `redis` is given). Keys are lower-cased and trimmed. */
export function createFailureCounter(durationS: number, keyPrefix: string, redis?: Redis): FailureCounter {
  // Points far above any real count: this limiter only counts, it never blocks.
  const limiter = counter(Number.MAX_SAFE_INTEGER, durationS, keyPrefix, redis);
  const norm = (key: string) => key.trim().toLowerCase();
  return {
    async count(key) {
      return (await limiter.get(norm(key)))?.consumedPoints ?? 0;
    },
    async add(key) {
      await limiter.consume(norm(key));
    },
    async remove(key) {
      await limiter.reward(norm(key), 1);
    },
  };
}

/** Settings of the per-account slow-down. */
export type SlowdownSettings = {
  /** Failures per account within the window that cost nothing. */
  freeFailures: number;
  /** Delay after the first failure past `freeFailures`, ms. */
  baseDelayMs: number;
  /** The longest delay, ms. */
  maxDelayMs: number;
};

/**
 * The delay before a sign-in attempt is checked, from the failures its account had within the
 * window (from any address): none for the first `freeFailures`, then `baseDelayMs` doubling with
 * each further failure up to `maxDelayMs` — min(max, base · 2^(failures − free)). A progressive
 * delay rather than a lock-out, as the OWASP Authentication Cheat Sheet ("Login Throttling")
 * recommends, so an attacker cannot lock the owner out, only slow every guess down.
 * @param failures failed attempts counted for the account (≥ 0)
 * @returns delay, ms
 */
export function progressiveDelayMs(failures: number, s: SlowdownSettings): number {
  if (failures < s.freeFailures) return 0;
  return Math.min(s.maxDelayMs, s.baseDelayMs * 2 ** Math.min(30, failures - s.freeFailures));
}

/** The limiters of the sign-in and password-reset routes. */
export type AuthLimiters = {
  /** Every sign-in attempt, per client address (429 over the limit). */
  signInByAddress: AttemptLimiter;
  /**
   * Failed sign-ins per account AND address (reset on success): 429 for that account from that
   * address only, so whoever guesses from one address is stopped while the owner, from another
   * address, is not refused.
   */
  signInByAccountAddress: AttemptLimiter;
  /** Failed sign-ins per account from any address: the slow-down, never a refusal. */
  signInFailuresByAccount: FailureCounter;
  /** The slow-down's settings (`progressiveDelayMs`). */
  slowdown: SlowdownSettings;
  /** Forgot-password requests, per address and per e-mail (no mail bombing). */
  resetByAddress: AttemptLimiter;
  resetByAccount: AttemptLimiter;
};

/**
 * Builds the auth limiters from settings: per app instance in memory (so each test app starts
 * fresh), or shared by every instance in `redis` (multi-instance mode).
 */
export function createAuthLimiters(cfg: { perAccountAddress: number; perAddress: number; windowS: number; slowdown: SlowdownSettings }, redis?: Redis): AuthLimiters {
  return {
    signInByAddress: createAttemptLimiter({ points: cfg.perAddress, durationS: cfg.windowS }, 'signin-addr', redis),
    signInByAccountAddress: createAttemptLimiter({ points: cfg.perAccountAddress, durationS: cfg.windowS }, 'signin-acct-addr', redis),
    signInFailuresByAccount: createFailureCounter(cfg.windowS, 'signin-acct', redis),
    slowdown: cfg.slowdown,
    resetByAddress: createAttemptLimiter({ points: cfg.perAddress, durationS: cfg.windowS }, 'reset-addr', redis),
    resetByAccount: createAttemptLimiter({ points: Math.max(1, Math.ceil(cfg.perAccountAddress / 2)), durationS: cfg.windowS }, 'reset-acct', redis),
  };
}
