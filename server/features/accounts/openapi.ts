import { z } from 'zod';
import { roleSchema } from '@shared/auth/roles';
import {
  acceptInvitationSchema,
  adminUserSchema,
  changePasswordSchema,
  createInvitationSchema,
  forgotPasswordSchema,
  invitationRowSchema,
  mailMessageSchema,
  mailSummarySchema,
  meSchema,
  resetPasswordSchema,
  sessionRowSchema,
  setRolesSchema,
  setStationsSchema,
  signInSchema,
  stationOptionSchema,
  tokenCheckSchema,
} from '@shared/auth/schemas';
import { jsonResponse, okSchema, type ApiOperation } from '@server/openapi/operation';
import { sessionParams } from './account-router';
import { mailQuery, numericParams, userParams } from './admin-router';

const noContent = { description: 'Done (no body)' };

/** /api/auth, /api/account and /api/admin as their routers serve them (auth-router.ts, account-router.ts, admin-router.ts). */
export const accountOperations: ApiOperation[] = [
  // /api/auth
  {
    method: 'post',
    path: '/api/auth/sign-in',
    summary: 'Sign in with e-mail and password; sets the session cookie',
    auth: 'public',
    body: { schema: signInSchema },
    responses: { 200: jsonResponse('Signed in (session cookie set)', okSchema), 401: { description: 'sign_in_failed: wrong e-mail or password' }, 429: { description: 'rate_limited: too many attempts (Retry-After)' } },
  },
  { method: 'post', path: '/api/auth/sign-out', summary: 'End this session', auth: 'session', responses: { 204: noContent } },
  { method: 'get', path: '/api/auth/me', summary: 'The signed-in user (roles, stations) and whether the local mailbox is in use', auth: 'session', responses: { 200: jsonResponse('The user', meSchema) } },
  {
    method: 'get',
    path: '/api/auth/session',
    summary: 'The session probe: the user, or null when nobody is signed in (never 401)',
    auth: 'public',
    responses: { 200: jsonResponse('The session or null', z.object({ session: meSchema.nullable() })) },
  },
  {
    method: 'post',
    path: '/api/auth/forgot-password',
    summary: 'Mail a reset link; the same answer whether or not the account exists',
    auth: 'public',
    body: { schema: forgotPasswordSchema },
    responses: { 202: jsonResponse('Accepted', z.object({ message: z.string() })), 429: { description: 'rate_limited' } },
  },
  {
    method: 'post',
    path: '/api/auth/reset-password/check',
    summary: 'Whether a reset link still works (the token travels in the body, never the URL)',
    auth: 'public',
    body: { schema: tokenCheckSchema },
    responses: { 200: jsonResponse('Usable', z.object({ email: z.string(), expiresAt: z.string() })), 404: { description: 'Unknown link' }, 410: { description: 'Used or expired link' } },
  },
  {
    method: 'post',
    path: '/api/auth/reset-password',
    summary: 'Set a new password with a reset link; every other session ends',
    auth: 'public',
    body: { schema: resetPasswordSchema },
    responses: { 200: jsonResponse('Password set, signed in', okSchema), 404: { description: 'Unknown link' }, 410: { description: 'Used or expired link' } },
  },
  {
    method: 'post',
    path: '/api/auth/invitations/check',
    summary: 'Whether an invitation link still works, and for whom',
    auth: 'public',
    body: { schema: tokenCheckSchema },
    responses: {
      200: jsonResponse('Usable', z.object({ email: z.string(), displayName: z.string(), roles: z.array(roleSchema), expiresAt: z.string() })),
      404: { description: 'Unknown link' },
      410: { description: 'Used, withdrawn or expired link' },
    },
  },
  {
    method: 'post',
    path: '/api/auth/invitations/accept',
    summary: 'Accept an invitation: set a password and sign in',
    auth: 'public',
    body: { schema: acceptInvitationSchema },
    responses: { 201: jsonResponse('Account made, signed in', okSchema), 404: { description: 'Unknown link' }, 409: { description: 'The address already has an account; sign in instead' }, 410: { description: 'Used, withdrawn or expired link' } },
  },

  // /api/account
  { method: 'put', path: '/api/account/password', summary: 'Change your password; your other sessions end', auth: 'session', body: { schema: changePasswordSchema }, responses: { 204: noContent } },
  { method: 'get', path: '/api/account/sessions', summary: 'Your sessions (ids are handles, not cookie secrets)', auth: 'session', responses: { 200: jsonResponse('Sessions', z.object({ sessions: z.array(sessionRowSchema) })) } },
  { method: 'delete', path: '/api/account/sessions/:id', summary: 'End one of your sessions by handle', auth: 'session', params: sessionParams, responses: { 204: noContent } },
  { method: 'delete', path: '/api/account/sessions', summary: 'End every session of yours but this one', auth: 'session', responses: { 204: noContent } },

  // /api/admin
  { method: 'get', path: '/api/admin/users', summary: 'People with roles, stations and session counts', auth: 'session', permission: 'users.manage', responses: { 200: jsonResponse('Users', z.object({ users: z.array(adminUserSchema) })) } },
  { method: 'get', path: '/api/admin/stations', summary: 'Stations for the assignment controls', auth: 'session', permission: 'users.manage', responses: { 200: jsonResponse('Stations', z.object({ stations: z.array(stationOptionSchema) })) } },
  { method: 'put', path: '/api/admin/users/:id/roles', summary: "Set a person's roles; their sessions end", auth: 'session', permission: 'users.manage', params: userParams, body: { schema: setRolesSchema }, responses: { 204: noContent, 409: { description: 'Would take admin from the last active admin' } } },
  { method: 'put', path: '/api/admin/users/:id/stations', summary: "Set an operator's stations", auth: 'session', permission: 'users.manage', params: userParams, body: { schema: setStationsSchema }, responses: { 204: noContent } },
  { method: 'post', path: '/api/admin/users/:id/deactivate', summary: 'Deactivate a person; their sessions end at once', auth: 'session', permission: 'users.manage', params: userParams, responses: { 204: noContent, 409: { description: 'Your own account, or the last active admin' } } },
  { method: 'post', path: '/api/admin/users/:id/reactivate', summary: 'Reactivate a person', auth: 'session', permission: 'users.manage', params: userParams, responses: { 204: noContent } },
  { method: 'get', path: '/api/admin/invitations', summary: 'Invitations and their status', auth: 'session', permission: 'users.manage', responses: { 200: jsonResponse('Invitations', z.object({ invitations: z.array(invitationRowSchema) })) } },
  {
    method: 'post',
    path: '/api/admin/invitations',
    summary: 'Invite a person by e-mail (the one-time link is mailed)',
    auth: 'session',
    permission: 'users.manage',
    body: { schema: createInvitationSchema },
    responses: { 201: jsonResponse('Invited', z.object({ invitation: invitationRowSchema })), 409: { description: 'The address already has a Seisift account' } },
  },
  { method: 'delete', path: '/api/admin/invitations/:id', summary: 'Withdraw a pending invitation', auth: 'session', permission: 'users.manage', params: numericParams, responses: { 204: noContent, 409: { description: 'No longer pending' } } },
  {
    method: 'get',
    path: '/api/admin/mailbox',
    summary: 'Mail caught by the local test mail server (only while no SMTP_URL is set)',
    auth: 'session',
    permission: 'mailbox.view',
    query: mailQuery,
    responses: { 200: jsonResponse('A page of messages', z.object({ messages: z.array(mailSummarySchema), total: z.number() })), 404: { description: 'mailbox_off: a real SMTP server is in use' } },
  },
  {
    method: 'get',
    path: '/api/admin/mailbox/:id',
    summary: 'One caught message with its text and HTML',
    auth: 'session',
    permission: 'mailbox.view',
    params: numericParams,
    responses: { 200: jsonResponse('The message', z.object({ message: mailMessageSchema })) },
  },
];
