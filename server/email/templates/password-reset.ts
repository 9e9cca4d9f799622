import { renderMail, type RenderedMail } from './layout';

/** The password-reset mail: the one-time link and when it expires. */
export function passwordResetMail(opts: { displayName: string; link: string; expiresAt: Date }): RenderedMail {
  return renderMail({
    subject: 'Reset your Seisift password',
    greeting: `Hello ${opts.displayName},`,
    paragraphs: [
      'Someone (hopefully you) asked to reset the password of your Seisift account.',
      `Open the link below to choose a new password. It works once and expires at ${opts.expiresAt.toISOString()} (UTC). Setting a new password signs you out everywhere else.`,
    ],
    link: { label: 'Choose a new password', href: opts.link },
    footer: 'If you did not ask for this, ignore this message: your password stays as it is.',
  });
}
