import nodemailer from 'nodemailer';

/** One outgoing message. */
export type OutgoingMail = { to: string; subject: string; text: string; html: string };

/** Sends mail; `kind` says whether it reaches a real server or the local fake. */
export interface Mailer {
  /** 'fake': the local fake SMTP server keeps every message for the admin mailbox page. */
  kind: 'smtp' | 'fake';
  send(mail: OutgoingMail): Promise<{ messageId: string }>;
  close(): void;
}

/**
 * A nodemailer SMTP transport to `url` (smtp:// or smtps://, user and password in the URL when
 * the server needs them). Fails after 10 s instead of hanging a request.
 */
export function createMailer(opts: { url: string; from: string; kind: 'smtp' | 'fake' }): Mailer {
  const url = new URL(opts.url);
  const secure = url.protocol === 'smtps:';
  const transport = nodemailer.createTransport(
    {
      host: url.hostname,
      port: url.port ? Number(url.port) : secure ? 465 : 587,
      secure,
      ...(url.username ? { auth: { user: decodeURIComponent(url.username), pass: decodeURIComponent(url.password) } } : {}),
      // The local fake speaks plain SMTP on loopback only.
      ignoreTLS: opts.kind === 'fake',
      connectionTimeout: 10_000,
      greetingTimeout: 10_000,
      socketTimeout: 10_000,
    },
    { from: opts.from },
  );
  return {
    kind: opts.kind,
    async send(mail) {
      const info = await transport.sendMail({ to: mail.to, subject: mail.subject, text: mail.text, html: mail.html });
      return { messageId: info.messageId };
    },
    close: () => transport.close(),
  };
}
