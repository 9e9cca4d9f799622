import type { AppContext } from '@server/context';
import { createAuthLimiters, type AuthLimiters } from './rate-limit';
import { createSessionStore, type SessionStore } from './sessions';

/** What the auth routes and middleware share within one app: the session store and the limiters. */
export type AuthKit = { sessions: SessionStore; limiters: AuthLimiters };

/** Builds the auth kit for one app instance from the context's database and settings. */
export function createAuthKit(ctx: AppContext): AuthKit {
  return {
    // Whenever sessions end (sign-out, deactivation, role change, password change), open live
    // sockets are re-checked at once and closed when theirs was among them.
    sessions: createSessionStore(ctx.database.db, { idleHours: ctx.env.SEISIFT_SESSION_IDLE_HOURS, onEnded: () => void ctx.hub.recheckNow() }),
    limiters: createAuthLimiters({
      perAccountAddress: ctx.env.SEISIFT_SIGNIN_MAX_PER_ACCOUNT_ADDRESS,
      perAddress: ctx.env.SEISIFT_SIGNIN_MAX_PER_ADDRESS,
      windowS: ctx.env.SEISIFT_SIGNIN_WINDOW_S,
      slowdown: { freeFailures: ctx.env.SEISIFT_SIGNIN_SLOWDOWN_AFTER, baseDelayMs: ctx.env.SEISIFT_SIGNIN_DELAY_MS, maxDelayMs: ctx.env.SEISIFT_SIGNIN_MAX_DELAY_MS },
    }, ctx.cluster?.redis),
  };
}
