import { roleLabels, type Role } from '@shared/auth/roles';
import { renderMail, type RenderedMail } from './layout';

/** The invitation mail: who invited, which roles, the one-time link and when it expires. */
export function invitationMail(opts: { displayName: string; invitedBy: string; roles: readonly Role[]; stationCodes: readonly string[]; link: string; expiresAt: Date }): RenderedMail {
  const roleWords = opts.roles.map((r) => roleLabels[r]).join(', ');
  return renderMail({
    subject: 'Your invitation to Seisift',
    greeting: `Hello ${opts.displayName},`,
    paragraphs: [
      `${opts.invitedBy} has invited you to Seisift, the waveform triage tool of your seismic network, as: ${roleWords}.`,
      ...(opts.stationCodes.length ? [`Stations assigned to you: ${opts.stationCodes.join(', ')}.`] : []),
      `Open the link below to choose your password. It works once and expires at ${opts.expiresAt.toISOString()} (UTC).`,
    ],
    link: { label: 'Accept the invitation', href: opts.link },
    footer: 'If you did not expect this invitation, ignore this message; nothing happens until the link is used.',
  });
}
