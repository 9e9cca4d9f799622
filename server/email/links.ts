import { authPagePaths } from '@shared/auth/links';
import type { Env } from '@server/env';

/**
 * The base URL of links in e-mail: SEISIFT_PUBLIC_URL, else http://HOST:PORT (with a wildcard
 * listen address shown as localhost). Never taken from the request's Host header, so a forged
 * Host cannot point a reset link elsewhere.
 */
export function publicBaseUrl(env: Env): string {
  if (env.SEISIFT_PUBLIC_URL) return env.SEISIFT_PUBLIC_URL.replace(/\/+$/, '');
  const host = env.HOST === '0.0.0.0' || env.HOST === '::' ? 'localhost' : env.HOST.includes(':') ? `[${env.HOST}]` : env.HOST;
  return `http://${host}:${env.PORT}`;
}

/** Client path of the invitation page; the token goes in the fragment, so it never reaches logs. */
export const invitationPath = authPagePaths.welcome;
/** Client path of the set-new-password page; token in the fragment too. */
export const resetPasswordPath = authPagePaths.resetPassword;

/** The link in an invitation mail. */
export function invitationLink(env: Env, token: string): string {
  return `${publicBaseUrl(env)}${invitationPath}#token=${token}`;
}

/** The link in a password-reset mail. */
export function resetLink(env: Env, token: string): string {
  return `${publicBaseUrl(env)}${resetPasswordPath}#token=${token}`;
}
