import { desc, eq } from 'drizzle-orm';
import { Router } from 'express';
import { z } from 'zod';
import { createInvitationSchema, setRolesSchema, setStationsSchema, type MailMessage, type MailSummary } from '../../../shared/auth/schemas';
import type { AuthKit } from '../../auth/kit';
import type { AppContext } from '../../context';
import { mailMessages } from '../../db/schema/mail-messages';
import { AppError, notFound } from '../../errors';
import { parseInput } from '../../middleware/validate';
import { requirePermission, userFor } from '../../policies/authorize';
import { createInvitation, listInvitations, revokeInvitation } from '../../services/invitations';
import { listStationOptions, listUsers, setUserActive, setUserRoles, setUserStations } from '../../services/users';
import { accountDeps, requestMeta } from '../auth/respond';

const userParams = z.object({ id: z.string().min(1).max(255) });
const numericParams = z.object({ id: z.coerce.number().int().positive() });
const mailQuery = z.object({ limit: z.coerce.number().int().min(1).max(200).default(50), offset: z.coerce.number().int().min(0).default(0) });

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
    const rows = await db
      .select({ id: mailMessages.id, receivedAt: mailMessages.receivedAt, from: mailMessages.fromHeader, to: mailMessages.envelopeTo, subject: mailMessages.subject })
      .from(mailMessages)
      .orderBy(desc(mailMessages.receivedAt), desc(mailMessages.id))
      .limit(q.limit)
      .offset(q.offset);
    const total = (await db.select({ id: mailMessages.id }).from(mailMessages)).length;
    const messages: MailSummary[] = rows.map((r) => ({ ...r, receivedAt: r.receivedAt.toISOString() }));
    res.json({ messages, total });
  });

  /** GET /api/admin/mailbox/:id → {message: MailMessage} */
  router.get('/mailbox/:id', requirePermission('mailbox.view'), async (req, res) => {
    if (ctx.mailer.kind !== 'fake') throw mailboxOff();
    const { id } = parseInput(numericParams, req.params, 'params');
    const [r] = await db.select().from(mailMessages).where(eq(mailMessages.id, id));
    if (!r) throw notFound('Message');
    const message: MailMessage = { id: r.id, receivedAt: r.receivedAt.toISOString(), from: r.fromHeader, to: r.envelopeTo, subject: r.subject, text: r.textBody, html: r.htmlBody };
    res.json({ message });
  });

  return router;
}
