/**
 * Client paths of the pages mail links open. The server writes them into invitation and reset
 * mails; the client router registers them. The one-time token travels in the fragment
 * (`#token=…`), which browsers never send to a server, so it stays out of access logs and Referer.
 */
export const authPagePaths = {
  signIn: '/sign-in',
  forgotPassword: '/forgot-password',
  resetPassword: '/reset-password',
  welcome: '/welcome',
} as const;
