import { Router, type Request } from 'express';
import { z } from 'zod';
import { latestWindowsQuerySchema } from '@shared/schemas/data-period';
import {
  applyThresholdsBodySchema,
  dashboardQuerySchema,
  exportQuerySchema,
  groupLabelBodySchema,
  inboxConfirmBodySchema,
  inboxReturnBodySchema,
  periodSchema,
  rescoreBodySchema,
  returnBodySchema,
  reviewQuerySchema,
  setStatusBodySchema,
  thresholdValuesSchema,
} from '@shared/schemas/supervisor';
import type { AppContext } from '@server/context';
import { itemStationId } from '@server/features/queue/queue-rows';
import { clientAddress, currentUser, requireUser } from '@server/auth/authenticate';
import type { AuthUser } from '@server/auth/principal';
import { parseInput } from '@server/http/validate';
import { authorizedStations, requirePermission } from '@server/policies/authorize';
import { can } from '@shared/auth/policies';
import { recordAudit } from '@server/features/audit/audit';
import { getCandidateEvent, labelCandidateEvent, listCandidateEvents, type CandidateEventView } from '@server/features/events/candidate-events';
import { buildCatalogueCsv } from './catalogue-csv';
import { listReview, loadCatalogue, reviewNote, setEvaluationStatus } from './catalogue-review';
import { dashboard } from './dashboard';
import { latestWindows } from './data-period';
import { acknowledge, confirmFromInbox, listInbox, markRead, returnFromInbox, settleItem } from './inbox';
import { buildQuakeml } from './quakeml-export';
import { applyThresholds, rescorePeriod, thresholdReport } from './thresholds';
import { notFound } from '@server/errors';

/** Params `:id` of the supervisor routes: an inbox entry, item or candidate event id. */
export const idParams = z.object({ id: z.string().regex(/^\d{1,15}$/, 'must be an id (a whole number)').transform(Number) });
/** Params `:stationId` of the threshold routes. */
export const stationParams = z.object({ stationId: z.string().regex(/^\d{1,15}$/, 'must be a station id (a whole number)').transform(Number) });
const num = z.preprocess((v) => (typeof v === 'string' && v.trim() !== '' ? Number(v) : v), z.number().finite('must be a number'));
/** Query of GET /api/supervisor/thresholds/:stationId: thresholds to try (each optional; the station's current ones fill the rest). */
export const proposedQuery = z.object({ eventZ: num.optional(), noiseZ: num.optional(), centroidMaxFactor: num.optional() });
/** Query of GET /api/supervisor/candidate-events: the period. */
export const candidateQuery = periodSchema;

/**
 * A candidate event as `scope` may see it: everything for 'all'; for an operator only the members
 * on their own stations (null when none is).
 */
function inScope(ev: CandidateEventView, scope: 'all' | readonly number[]): CandidateEventView | null {
  if (scope === 'all') return ev;
  const members = ev.members.filter((m) => scope.includes(m.stationId));
  return members.length === 0 ? null : { ...ev, members };
}

/**
 * The network supervisor's API (issue 7), mounted at /api/supervisor. Every route needs a session
 * (401) and the named permission (403):
 * - inbox (inbox.view): `GET /inbox`; `POST /inbox/:id/read|acknowledge|return`; `POST /inbox/:id/confirm
 *   {label?}` (an escalated item without an event label needs `label`: 422 label_required)
 * - review (review.evaluate): `GET /review?station=&type=&analyst=&status=&from=&to=`;
 *   `POST /review/items/:id/status {version,status,comment}`; `POST /review/items/:id/return {version,comment}`
 * - `GET /items/:id/review-note` (queue.view): the supervisor's comment the analyst sees
 * - candidate events (queue.view): `GET /candidate-events?from=&to=`, `GET /candidate-events/:id`;
 *   `POST /candidate-events/:id/label {eventType, current?}` (queue.label) labels every member with
 *   the type only (`current`, the member the analyst is on, with its whole label)
 * - thresholds (thresholds.edit): `GET /thresholds/:stationId?eventZ=&noiseZ=&centroidMaxFactor=`;
 *   `POST /thresholds/:stationId/apply {thresholds}`; `POST /thresholds/:stationId/rescore {from,to}`
 * - `GET /dashboard?from=&to=` (dashboard.view)
 * - `GET /latest-windows?stationId=` (review.evaluate; the review, thresholds and dashboard screens,
 *   all a supervisor's, default their period to the data with it)
 * - `GET /export?from=&to=&format=quakeml|csv&status=` (catalogue.export): a download
 */
export function supervisorRouter(ctx: AppContext): Router {
  const router = Router();
  const db = ctx.database.db;
  const deps = (req: Request) => ({ db, notify: () => ctx.hub.notify(), ipAddress: clientAddress(req) });
  const person = (u: AuthUser) => ({ id: u.id, displayName: u.displayName, email: u.email });

  router.use(requireUser);

  // Inbox.
  router.get('/inbox', requirePermission('inbox.view'), async (req, res) => {
    res.json(await listInbox(db, currentUser(req).id));
  });
  router.post('/inbox/:id/read', requirePermission('inbox.view'), async (req, res) => {
    const { id } = parseInput(idParams, req.params, 'params');
    await markRead(deps(req), person(currentUser(req)), id);
    res.json(await listInbox(db, currentUser(req).id));
  });
  router.post('/inbox/:id/acknowledge', requirePermission('inbox.view'), async (req, res) => {
    const { id } = parseInput(idParams, req.params, 'params');
    await acknowledge(deps(req), person(currentUser(req)), id);
    res.json(await listInbox(db, currentUser(req).id));
  });
  router.post('/inbox/:id/confirm', requirePermission('review.evaluate'), async (req, res) => {
    const { id } = parseInput(idParams, req.params, 'params');
    const body = parseInput(inboxConfirmBodySchema, req.body ?? {});
    await confirmFromInbox(deps(req), person(currentUser(req)), id, body.label);
    res.json(await listInbox(db, currentUser(req).id));
  });
  router.post('/inbox/:id/return', requirePermission('review.evaluate'), async (req, res) => {
    const { id } = parseInput(idParams, req.params, 'params');
    const body = parseInput(inboxReturnBodySchema, req.body);
    await returnFromInbox(deps(req), person(currentUser(req)), id, body.comment);
    res.json(await listInbox(db, currentUser(req).id));
  });

  // Review of labelled events.
  router.get('/review', requirePermission('review.evaluate'), async (req, res) => {
    const q = parseInput(reviewQuerySchema, req.query, 'query');
    res.json({ items: await listReview(db, q) });
  });
  router.post('/review/items/:id/status', requirePermission('review.evaluate'), async (req, res) => {
    const { id } = parseInput(idParams, req.params, 'params');
    const body = parseInput(setStatusBodySchema, req.body);
    await setEvaluationStatus(deps(req), person(currentUser(req)), id, body.version, body.status, body.comment);
    res.json({ ok: true });
  });
  router.post('/review/items/:id/return', requirePermission('review.evaluate'), async (req, res) => {
    const { id } = parseInput(idParams, req.params, 'params');
    const body = parseInput(returnBodySchema, req.body);
    await settleItem(deps(req), person(currentUser(req)), id, body.version, 'returned', body.comment);
    res.json({ ok: true });
  });
  router.get('/items/:id/review-note', requirePermission('queue.view'), async (req, res) => {
    const { id } = parseInput(idParams, req.params, 'params');
    const stationId = await itemStationId(db, id);
    // Out of scope answers as missing does (as GET /api/queue/items/:id), so no id tells whether it exists.
    if (stationId === null || !can(currentUser(req), 'queue.view', { stationId })) throw notFound(`Queue item ${id}`);
    res.json({ note: await reviewNote(db, id) });
  });

  // Candidate events.
  router.get('/candidate-events', requirePermission('queue.view'), async (req, res) => {
    const q = parseInput(candidateQuery, req.query, 'query');
    const scope = authorizedStations(currentUser(req), 'queue.view');
    const events = await listCandidateEvents(db, { from: new Date(q.from), to: new Date(q.to) });
    res.json({ events: events.map((e) => inScope(e, scope)).filter((e) => e !== null) });
  });
  router.get('/candidate-events/:id', requirePermission('queue.view'), async (req, res) => {
    const { id } = parseInput(idParams, req.params, 'params');
    const found = await getCandidateEvent(db, id);
    const ev = found ? inScope(found, authorizedStations(currentUser(req), 'queue.view')) : null;
    if (!ev) throw notFound(`Candidate event ${id}`);
    res.json(ev);
  });
  router.post('/candidate-events/:id/label', requirePermission('queue.label'), async (req, res) => {
    const { id } = parseInput(idParams, req.params, 'params');
    const body = parseInput(groupLabelBodySchema, req.body);
    res.json({ members: await labelCandidateEvent(deps(req), person(currentUser(req)), id, body) });
  });

  // Thresholds.
  router.get('/thresholds/:stationId', requirePermission('thresholds.edit'), async (req, res) => {
    const { stationId } = parseInput(stationParams, req.params, 'params');
    const q = parseInput(proposedQuery, req.query, 'query');
    const given = q.eventZ !== undefined || q.noiseZ !== undefined || q.centroidMaxFactor !== undefined;
    let proposed = null;
    if (given) {
      const base = await thresholdReport(db, stationId, null);
      proposed = parseInput(thresholdValuesSchema, { ...base.current, ...Object.fromEntries(Object.entries(q).filter(([, v]) => v !== undefined)) }, 'query');
    }
    res.json(await thresholdReport(db, stationId, proposed));
  });
  router.post('/thresholds/:stationId/apply', requirePermission('thresholds.edit'), async (req, res) => {
    const { stationId } = parseInput(stationParams, req.params, 'params');
    const body = parseInput(applyThresholdsBodySchema, req.body);
    await applyThresholds(deps(req), person(currentUser(req)), stationId, body.thresholds);
    res.json(await thresholdReport(db, stationId, null));
  });
  router.post('/thresholds/:stationId/rescore', requirePermission('thresholds.edit'), async (req, res) => {
    const { stationId } = parseInput(stationParams, req.params, 'params');
    const body = parseInput(rescoreBodySchema, req.body);
    res.json(await rescorePeriod(deps(req), person(currentUser(req)), stationId, { from: new Date(body.from), to: new Date(body.to) }));
  });

  // Dashboard.
  router.get('/dashboard', requirePermission('dashboard.view'), async (req, res) => {
    const q = parseInput(dashboardQuerySchema, req.query, 'query');
    res.json(await dashboard(db, { from: new Date(q.from), to: new Date(q.to) }));
  });

  // Where the data is in time (default periods of the screens).
  router.get('/latest-windows', requirePermission('review.evaluate'), async (req, res) => {
    const q = parseInput(latestWindowsQuerySchema, req.query, 'query');
    res.json(await latestWindows(db, q.stationId));
  });

  // Export.
  router.get('/export', requirePermission('catalogue.export'), async (req, res) => {
    const q = parseInput(exportQuerySchema, req.query, 'query');
    const user = currentUser(req);
    const period = { from: new Date(q.from), to: new Date(q.to) };
    const events = await loadCatalogue(db, period, q.status);
    const stamp = `${period.from.toISOString().slice(0, 10)}_${period.to.toISOString().slice(0, 10)}`;
    await recordAudit(db, {
      actor: { id: user.id, email: user.email },
      action: 'catalogue.exported',
      details: { format: q.format, from: q.from, to: q.to, status: q.status, events: events.length },
      ip: clientAddress(req),
    });
    if (q.format === 'csv') {
      res.setHeader('Content-Type', 'text/csv; charset=utf-8');
      res.setHeader('Content-Disposition', `attachment; filename="seisift-catalogue-${stamp}.csv"`);
      res.send(buildCatalogueCsv(events));
      return;
    }
    res.setHeader('Content-Type', 'application/xml; charset=utf-8');
    res.setHeader('Content-Disposition', `attachment; filename="seisift-catalogue-${stamp}.xml"`);
    res.send(buildQuakeml(events, { createdAt: new Date().toISOString(), period: { from: period.from.toISOString(), to: period.to.toISOString() } }));
  });

  return router;
}
