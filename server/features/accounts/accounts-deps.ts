import type { SessionStore } from '@server/auth/sessions';
import type { Database } from '@server/db/client';
import type { Mailer } from '@server/email/mailer';
import type { Env } from '@server/env';
import type { Logger } from '@server/logger';

/** What the account services need. */
export type AccountDeps = { db: Database; sessions: SessionStore; mailer: Mailer; env: Env; logger: Logger };

/** Where a request came from, for sessions and audit rows. */
export type RequestMeta = { ip: string | null; userAgent: string | null };
