import type { Database } from '@server/db/client';
import type { Env } from '@server/env';
import { startFakeSmtp, type FakeSmtpServer } from './fake-smtp';
import { createMailer, type Mailer } from './mailer';

/** The mailer the app uses, and the fake server behind it when there is one. */
export type MailSetup = { mailer: Mailer; fake: FakeSmtpServer | null; close(): Promise<void> };

/**
 * SMTP_URL set: mail goes there. Unset: starts the local fake SMTP server on
 * SEISIFT_FAKE_SMTP_PORT (or `fakePort`, 0 = free port) and sends to it.
 */
export async function setUpMail(env: Env, db: Database, opts: { fakePort?: number; onError?: (err: Error) => void } = {}): Promise<MailSetup> {
  if (env.SMTP_URL) {
    const mailer = createMailer({ url: env.SMTP_URL, from: env.MAIL_FROM, kind: 'smtp' });
    return { mailer, fake: null, close: async () => mailer.close() };
  }
  const fake = await startFakeSmtp({ db, port: opts.fakePort ?? env.SEISIFT_FAKE_SMTP_PORT, onError: opts.onError });
  const mailer = createMailer({ url: fake.url, from: env.MAIL_FROM, kind: 'fake' });
  return {
    mailer,
    fake,
    async close() {
      mailer.close();
      await fake.close();
    },
  };
}
