import type { SessionStore } from '../../auth/sessions';
import type { Database } from '../../db/client';
import type { Mailer } from '../../email/mailer';
import type { Env } from '../../env';
import type { Logger } from '../../logger';

/** What the account services need. */
export type AccountDeps = { db: Database; sessions: SessionStore; mailer: Mailer; env: Env; logger: Logger };

/** Where a request came from, for sessions and audit rows. */
export type RequestMeta = { ip: string | null; userAgent: string | null };
