import { Router, type Request } from 'express';
import multer from 'multer';
import { z } from 'zod';
import { processingProfileSchema } from '@shared/schemas/processing-profile';
import { channelInputSchema, idParamSchema, stationCreateSchema, stationUpdateSchema, tokenCreateSchema } from '@shared/schemas/station';
import type { AppContext } from '@server/context';
import { badRequest, notFound, tooLarge } from '@server/errors';
import { clientAddress, currentUser } from '@server/auth/authenticate';
import type { AuthUser } from '@server/auth/principal';
import { parseInput } from '@server/http/validate';
import { authorize, authorizedStations, requirePermission } from '@server/policies/authorize';
import { stationHealth } from './station-health';
import { stationBaseline } from './station-baseline';
import {
  createStation,
  createToken,
  deleteChannel,
  getStation,
  listStations,
  listTokens,
  requireStationRow,
  revokeToken,
  storedProfile,
  updateProfile,
  updateStation,
  upsertChannel,
  type Actor,
} from './station-registry';
import { applyStationXml, importApplySchema, previewStationXml } from './stationxml-import';

/** Route parameters `:id/…/:childId`. */
export const childParamSchema = z.object({
  id: z.coerce.number().int().positive('id must be a positive whole number'),
  childId: z.coerce.number().int().positive('id must be a positive whole number'),
});

/** Query of GET /api/stations/:id/health. */
export const healthQuerySchema = z.object({ days: z.coerce.number().int().min(1).max(365).default(30) });

/** Largest StationXML document accepted, bytes. */
export const MAX_STATIONXML_BYTES = 10 * 1024 * 1024;

const actorOf = (user: AuthUser, req: Request): Actor => ({ userId: user.id, label: user.email, ipAddress: clientAddress(req) });

/**
 * /api/stations: the registry (list, create, view, edit), channels, processing profile, ingest
 * tokens, health and StationXML import. Every handler: user → validate → authorize on the station
 * id (the shared policy) → load → service. Authorizing before loading answers a station that is
 * not yours and one that does not exist alike (403), so ids tell nothing about what exists.
 */
export function stationsRouter(ctx: AppContext): Router {
  const db = ctx.database.db;
  const router = Router();
  const xmlUpload = multer({ storage: multer.memoryStorage(), defParamCharset: 'utf8', limits: { fileSize: MAX_STATIONXML_BYTES, files: 1, fields: 4, fieldSize: 1024 } }).single('file');

  const readXml = (req: Request, res: Parameters<typeof xmlUpload>[1]) =>
    new Promise<string>((resolve, reject) => {
      xmlUpload(req, res, (err: unknown) => {
        if (err instanceof multer.MulterError) {
          if (err.code === 'LIMIT_FILE_SIZE') return reject(tooLarge(`The StationXML file is larger than the limit of ${MAX_STATIONXML_BYTES / 1024 / 1024} MB`));
          return reject(badRequest(`file: ${err.message}`));
        }
        if (err) return reject(err instanceof Error ? err : new Error(typeof err === 'string' ? err : 'the StationXML upload could not be read', { cause: err }));
        if (!req.file) return reject(badRequest('file: attach the StationXML document as the multipart field "file"'));
        resolve(req.file.buffer.toString('utf8'));
      });
    });

  router.get('/', requirePermission('station.view'), async (req, res) => {
    const scope = authorizedStations(currentUser(req), 'station.view');
    res.json({ stations: await listStations(db, scope) });
  });

  router.post('/', requirePermission('station.create'), async (req, res) => {
    const user = currentUser(req);
    const input = parseInput(stationCreateSchema, req.body);
    const assign = user.roles.includes('operator') && !user.roles.includes('admin');
    const id = await createStation(db, input, actorOf(user, req), assign ? { assignTo: user.id } : {});
    res.status(201).json({ station: await getStation(db, id) });
  });

  router.post('/import/preview', requirePermission('station.view'), async (req, res) => {
    const user = currentUser(req);
    const xml = await readXml(req, res);
    const { preview } = await previewStationXml(db, xml, user);
    res.json(preview);
  });

  router.post('/import/apply', requirePermission('station.view'), async (req, res) => {
    const user = currentUser(req);
    const xml = await readXml(req, res);
    const { previewHash } = parseInput(importApplySchema, req.body);
    const applied = await applyStationXml(db, xml, previewHash, { ...user, isOperator: user.roles.includes('operator') }, actorOf(user, req));
    res.json(applied);
  });

  router.get('/:id', requirePermission('station.view'), async (req, res) => {
    const { id } = parseInput(idParamSchema, req.params, 'params');
    const user = currentUser(req);
    authorize(user, 'station.view', { stationId: id });
    const station = await getStation(db, id);
    if (!station) throw notFound(`Station ${id}`);
    const { view } = await stationBaseline(db, id, station.profile.thresholds.minBaselineWindows);
    res.json({ station, baseline: view });
  });

  router.patch('/:id', requirePermission('station.edit'), async (req, res) => {
    const { id } = parseInput(idParamSchema, req.params, 'params');
    const user = currentUser(req);
    const patch = parseInput(stationUpdateSchema, req.body);
    authorize(user, 'station.edit', { stationId: id });
    await requireStationRow(db, id);
    await updateStation(db, id, patch, actorOf(user, req));
    res.json({ station: await getStation(db, id) });
  });

  router.put('/:id/profile', requirePermission('station.edit'), async (req, res) => {
    const { id } = parseInput(idParamSchema, req.params, 'params');
    const user = currentUser(req);
    const parsed = processingProfileSchema.safeParse(req.body);
    if (!parsed.success) {
      const issues = parsed.error.issues.map((i) => ({ path: ['profile', ...i.path.map(String)].join('.'), message: i.message }));
      throw badRequest(`${issues[0]?.path ?? 'profile'}: ${issues[0]?.message ?? 'invalid'}`, { issues });
    }
    authorize(user, 'station.edit', { stationId: id });
    await requireStationRow(db, id);
    const profile = await updateProfile(db, id, parsed.data, actorOf(user, req));
    res.json({ profile });
  });

  router.post('/:id/channels', requirePermission('station.edit'), async (req, res) => {
    const { id } = parseInput(idParamSchema, req.params, 'params');
    const user = currentUser(req);
    const input = parseInput(channelInputSchema, req.body);
    authorize(user, 'station.edit', { stationId: id });
    await requireStationRow(db, id);
    await upsertChannel(db, id, input, actorOf(user, req));
    res.status(201).json({ station: await getStation(db, id) });
  });

  router.delete('/:id/channels/:childId', requirePermission('station.edit'), async (req, res) => {
    const { id, childId } = parseInput(childParamSchema, req.params, 'params');
    const user = currentUser(req);
    authorize(user, 'station.edit', { stationId: id });
    await requireStationRow(db, id);
    await deleteChannel(db, id, childId, actorOf(user, req));
    res.status(204).end();
  });

  router.get('/:id/tokens', requirePermission('token.manage'), async (req, res) => {
    const { id } = parseInput(idParamSchema, req.params, 'params');
    const user = currentUser(req);
    authorize(user, 'token.manage', { stationId: id });
    await requireStationRow(db, id);
    res.json({ tokens: await listTokens(db, id) });
  });

  router.post('/:id/tokens', requirePermission('token.manage'), async (req, res) => {
    const { id } = parseInput(idParamSchema, req.params, 'params');
    const user = currentUser(req);
    const { label } = parseInput(tokenCreateSchema, req.body);
    authorize(user, 'token.manage', { stationId: id });
    await requireStationRow(db, id);
    res.setHeader('Cache-Control', 'no-store');
    res.status(201).json(await createToken(db, id, label, actorOf(user, req)));
  });

  router.post('/:id/tokens/:childId/revoke', requirePermission('token.manage'), async (req, res) => {
    const { id, childId } = parseInput(childParamSchema, req.params, 'params');
    const user = currentUser(req);
    authorize(user, 'token.manage', { stationId: id });
    await requireStationRow(db, id);
    res.json({ token: await revokeToken(db, id, childId, actorOf(user, req)) });
  });

  router.get('/:id/health', requirePermission('station.view'), async (req, res) => {
    const { id } = parseInput(idParamSchema, req.params, 'params');
    const { days } = parseInput(healthQuerySchema, req.query, 'query');
    const user = currentUser(req);
    authorize(user, 'station.view', { stationId: id });
    const row = await requireStationRow(db, id);
    res.json(await stationHealth(db, id, { days, minBaselineWindows: storedProfile(row).thresholds.minBaselineWindows }));
  });

  return router;
}
