import { Router } from 'express';
import { z } from 'zod';
import { createInvitationSchema, setRolesSchema, setStationsSchema } from '@shared/auth/schemas';
import type { AuthKit } from '@server/auth/kit';
import type { AppContext } from '@server/context';
import { getMail, listMail } from '@server/email/mailbox';
import { AppError, notFound } from '@server/errors';
import { parseInput } from '@server/http/validate';
import { requirePermission, userFor } from '@server/policies/authorize';
import { createInvitation, listInvitations, revokeInvitation } from './invitations';
import { listStationOptions, listUsers, setUserActive, setUserRoles, setUserStations } from './users';
import { accountDeps, requestMeta } from './respond';

/** Params `:id` of the admin user routes: a user id. */
export const userParams = z.object({ id: z.string().min(1).max(255) });
/** Params `:id` of invitations and mail messages: a positive whole number. */
export const numericParams = z.object({ id: z.coerce.number().int().positive() });
/** Query of GET /api/admin/mailbox: a page of messages. */
export const mailQuery = z.object({ limit: z.coerce.number().int().min(1).max(200).default(50), offset: z.coerce.number().int().min(0).default(0) });

/** /api/admin: users, roles, station assignments, invitations (users.manage) and the mailbox (mailbox.view). */
export function adminRouter(ctx: AppContext, kit: AuthKit): Router {
  const router = Router();
  const deps = accountDeps(ctx, kit);
  const db = ctx.database.db;

  /** GET /api/admin/users → {users: AdminUser[]} */
  router.get('/users', requirePermission('users.manage'), async (_req, res) => {
    res.json({ users: await listUsers(db) });
  });

  /** GET /api/admin/stations → {stations: StationOption[]} for the assignment controls. */
  router.get('/stations', requirePermission('users.manage'), async (_req, res) => {
    res.json({ stations: await listStationOptions(db) });
  });

  /** PUT /api/admin/users/:id/roles {roles} → 204; ends that user's sessions. */
  router.put('/users/:id/roles', requirePermission('users.manage'), async (req, res) => {
    const actor = userFor(req, 'users.manage');
    const { id } = parseInput(userParams, req.params, 'params');
    const { roles } = parseInput(setRolesSchema, req.body);
    await setUserRoles(deps, actor, id, roles, requestMeta(req));
    res.status(204).end();
  });

  /** PUT /api/admin/users/:id/stations {stationIds} → 204; that user's live sockets close (4403) and reconnect with the new stations. */
  router.put('/users/:id/stations', requirePermission('users.manage'), async (req, res) => {
    const actor = userFor(req, 'users.manage');
    const { id } = parseInput(userParams, req.params, 'params');
    const { stationIds } = parseInput(setStationsSchema, req.body);
    await setUserStations(deps, actor, id, stationIds, requestMeta(req));
    await ctx.hub.recheckNow();
    res.status(204).end();
  });

  /** POST /api/admin/users/:id/deactivate → 204; ends that user's sessions at once. */
  router.post('/users/:id/deactivate', requirePermission('users.manage'), async (req, res) => {
    const actor = userFor(req, 'users.manage');
    const { id } = parseInput(userParams, req.params, 'params');
    await setUserActive(deps, actor, id, false, requestMeta(req));
    res.status(204).end();
  });

  /** POST /api/admin/users/:id/reactivate → 204 */
  router.post('/users/:id/reactivate', requirePermission('users.manage'), async (req, res) => {
    const actor = userFor(req, 'users.manage');
    const { id } = parseInput(userParams, req.params, 'params');
    await setUserActive(deps, actor, id, true, requestMeta(req));
    res.status(204).end();
  });

  /** GET /api/admin/invitations → {invitations: InvitationRow[]} */
  router.get('/invitations', requirePermission('users.manage'), async (_req, res) => {
    res.json({ invitations: await listInvitations(db) });
  });

  /** POST /api/admin/invitations {email, displayName, roles, stationIds} → 201 {invitation}; mails the link. */
  router.post('/invitations', requirePermission('users.manage'), async (req, res) => {
    const actor = userFor(req, 'users.manage');
    const input = parseInput(createInvitationSchema, req.body);
    res.status(201).json({ invitation: await createInvitation(deps, actor, input, requestMeta(req)) });
  });

  /** DELETE /api/admin/invitations/:id → 204; withdraws a pending invitation. */
  router.delete('/invitations/:id', requirePermission('users.manage'), async (req, res) => {
    const actor = userFor(req, 'users.manage');
    const { id } = parseInput(numericParams, req.params, 'params');
    await revokeInvitation(deps, actor, id, requestMeta(req));
    res.status(204).end();
  });

  const mailboxOff = () => new AppError(404, 'mailbox_off', 'The mailbox exists only while the local test mail server is in use (SMTP_URL is set, so mail goes to a real server)');

  /** GET /api/admin/mailbox?limit&offset → {messages: MailSummary[], total}; 404 mailbox_off with a real SMTP server. */
  router.get('/mailbox', requirePermission('mailbox.view'), async (req, res) => {
    if (ctx.mailer.kind !== 'fake') throw mailboxOff();
    const q = parseInput(mailQuery, req.query, 'query');
    res.json(await listMail(db, q));
  });

  /** GET /api/admin/mailbox/:id → {message: MailMessage} */
  router.get('/mailbox/:id', requirePermission('mailbox.view'), async (req, res) => {
    if (ctx.mailer.kind !== 'fake') throw mailboxOff();
    const { id } = parseInput(numericParams, req.params, 'params');
    const message = await getMail(db, id);
    if (!message) throw notFound('Message');
    res.json({ message });
  });

  return router;
}
