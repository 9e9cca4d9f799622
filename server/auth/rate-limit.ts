import { RateLimiterMemory, RateLimiterRes } from 'rate-limiter-flexible';
import { tooManyRequests } from '@server/errors';

/** Limits for one kind of attempt: `points` attempts per `durationS` seconds per key. */
export type AttemptLimit = { points: number; durationS: number };

/**
 * Counts attempts per key (an address or an account) with rate-limiter-flexible, in memory (one
 * Seisift process serves the network; a restart forgets the counts).
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

/** Builds an attempt limiter. Keys are lower-cased and trimmed. */
export function createAttemptLimiter(limit: AttemptLimit, keyPrefix: string): AttemptLimiter {
  const limiter = new RateLimiterMemory({ points: limit.points, duration: limit.durationS, keyPrefix });
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

/** The limiters of the sign-in and password-reset routes. */
export type AuthLimiters = {
  /** Every sign-in attempt, per client address. */
  signInByAddress: AttemptLimiter;
  /** Failed sign-ins, per account e-mail (reset on success). */
  signInByAccount: AttemptLimiter;
  /** Forgot-password requests, per address and per e-mail (no mail bombing). */
  resetByAddress: AttemptLimiter;
  resetByAccount: AttemptLimiter;
};

/** Builds the auth limiters from settings (per app instance, so each test app starts fresh). */
export function createAuthLimiters(cfg: { perAccount: number; perAddress: number; windowS: number }): AuthLimiters {
  return {
    signInByAddress: createAttemptLimiter({ points: cfg.perAddress, durationS: cfg.windowS }, 'signin-addr'),
    signInByAccount: createAttemptLimiter({ points: cfg.perAccount, durationS: cfg.windowS }, 'signin-acct'),
    resetByAddress: createAttemptLimiter({ points: cfg.perAddress, durationS: cfg.windowS }, 'reset-addr'),
    resetByAccount: createAttemptLimiter({ points: Math.max(1, Math.ceil(cfg.perAccount / 2)), durationS: cfg.windowS }, 'reset-acct'),
  };
}
