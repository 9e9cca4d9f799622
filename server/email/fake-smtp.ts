import { SMTPServer } from 'smtp-server';
import type { Database } from '@server/db/client';
import { mailMessages } from '@server/db/schema/mail-messages';
import { parseMessage } from './parse-message';

/** A running local fake SMTP server. */
export interface FakeSmtpServer {
  host: string;
  port: number;
  /** smtp://host:port for nodemailer. */
  url: string;
  close(): Promise<void>;
}

/** Largest message the fake server accepts, bytes. */
export const fakeSmtpMaxBytes = 10 * 1024 * 1024;

/** Thrown when the fake SMTP server cannot listen; one line for the terminal. */
export class FakeSmtpError extends Error {
  override readonly name = 'FakeSmtpError';
}

/**
 * Starts the local fake SMTP server (smtp-server) on 127.0.0.1 only. It accepts every message
 * without authentication or TLS — safe because it listens on loopback and delivers nowhere — and
 * stores each one in `mail_messages`, where the admin mailbox page reads it.
 * @param port TCP port (0 picks a free one)
 */
export async function startFakeSmtp(opts: { db: Database; port: number; onError?: (err: Error) => void }): Promise<FakeSmtpServer> {
  const host = '127.0.0.1';
  const server = new SMTPServer({
    authOptional: true,
    disabledCommands: ['AUTH', 'STARTTLS'],
    size: fakeSmtpMaxBytes,
    logger: false,
    banner: 'Seisift local test mail server (delivers nowhere)',
    onData(stream, session, callback) {
      const chunks: Buffer[] = [];
      stream.on('data', (c: Buffer) => chunks.push(c));
      stream.on('end', () => {
        if (stream.sizeExceeded) return callback(new Error(`message is larger than ${fakeSmtpMaxBytes} bytes`));
        const raw = Buffer.concat(chunks).toString('utf8');
        const parsed = parseMessage(raw);
        const from = session.envelope.mailFrom;
        opts.db
          .insert(mailMessages)
          .values({
            messageId: parsed.messageId?.slice(0, 255) ?? null,
            envelopeFrom: from ? from.address.slice(0, 254) : null,
            envelopeTo: session.envelope.rcptTo.map((r) => r.address),
            fromHeader: parsed.from?.slice(0, 500) ?? null,
            toHeader: parsed.to?.slice(0, 1000) ?? null,
            subject: parsed.subject.slice(0, 500),
            textBody: parsed.text,
            htmlBody: parsed.html,
            raw,
            sizeBytes: Buffer.byteLength(raw),
            receivedAt: new Date(),
          })
          .then(() => callback(), (err: unknown) => callback(err instanceof Error ? err : new Error(String(err))));
      });
    },
  });
  server.on('error', (err) => opts.onError?.(err));
  await new Promise<void>((resolve, reject) => {
    const onError = (err: NodeJS.ErrnoException) =>
      reject(new FakeSmtpError(err.code === 'EADDRINUSE' ? `SEISIFT_FAKE_SMTP_PORT: port ${opts.port} on ${host} is already in use; choose another or set SMTP_URL` : `the fake SMTP server could not start: ${err.message}`));
    server.server.once('error', onError);
    server.listen(opts.port, host, () => {
      server.server.off('error', onError);
      resolve();
    });
  });
  const address = server.server.address();
  const port = typeof address === 'object' && address ? address.port : opts.port;
  return {
    host,
    port,
    url: `smtp://${host}:${port}`,
    close: () => new Promise<void>((resolve) => server.close(() => resolve())),
  };
}
