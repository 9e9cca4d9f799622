import type { AppContext } from '@server/context';
import { createAuthLimiters, type AuthLimiters } from './rate-limit';
import { createSessionStore, type SessionStore } from './sessions';

/** What the auth routes and middleware share within one app: the session store and the limiters. */
export type AuthKit = { sessions: SessionStore; limiters: AuthLimiters };

/** Builds the auth kit for one app instance from the context's database and settings. */
export function createAuthKit(ctx: AppContext): AuthKit {
  return {
    sessions: createSessionStore(ctx.database.db, { idleHours: ctx.env.SEISIFT_SESSION_IDLE_HOURS }),
    limiters: createAuthLimiters({
      perAccount: ctx.env.SEISIFT_SIGNIN_MAX_PER_ACCOUNT,
      perAddress: ctx.env.SEISIFT_SIGNIN_MAX_PER_ADDRESS,
      windowS: ctx.env.SEISIFT_SIGNIN_WINDOW_S,
    }),
  };
}
