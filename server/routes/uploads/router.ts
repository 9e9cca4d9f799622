import { Router, type NextFunction, type Request, type Response } from 'express';
import multer from 'multer';
import { can } from '../../../shared/auth/policies';
import { uploadFieldsSchema } from '../../../shared/schemas/upload';
import type { AppContext } from '../../context';
import { badRequest, forbidden, tooLarge, unauthorized } from '../../errors';
import type { AnalysisPool } from '../../jobs/analysis-pool';
import { clientAddress, getRequestAuth } from '../../middleware/auth';
import { parseInput } from '../../middleware/validate';
import { defaultAnalysisPool, ingestFiles, type IngestCaller, type IngestDeps } from '../../services/ingest-upload';

const mb = (bytes: number) => `${Math.round((bytes / 1024 / 1024) * 100) / 100} MB`;

/** Options of the uploads router (tests pass their own pool or a failure hook). */
export interface UploadsRouterOptions {
  pool?: AnalysisPool;
  beforeCommit?: IngestDeps['beforeCommit'];
}

/** Who may upload: a signed-in person whose role reaches `upload.create`, or an ingest token. */
function uploadCaller(req: Request): IngestCaller {
  const auth = getRequestAuth(req);
  const ipAddress = clientAddress(req);
  if (auth.kind === 'ingest') return { kind: 'ingest', ingest: auth.ingest, ipAddress };
  if (auth.kind !== 'user') throw unauthorized('Sign in, or send Authorization: Bearer <ingest token>');
  if (!can(auth.user, 'upload.create')) throw forbidden('You may not upload windows (station operators upload for their own stations)');
  return { kind: 'user', user: auth.user, ipAddress };
}

/**
 * POST /api/uploads: multipart with one or more files in the field `files` (MiniSEED 2/3 or CSV)
 * and an optional `streamId` for CSV. Authenticated by session or ingest token BEFORE the body is
 * read; multer's limits (SEISIFT_MAX_UPLOAD_BYTES per file, SEISIFT_MAX_UPLOAD_FILES per request)
 * stop reading as soon as one is passed → 413 naming the limit. Answers `{ files: [outcome…] }`
 * with 201 when any file was created (see overallStatus for the rest).
 */
export function uploadsRouter(ctx: AppContext, opts: UploadsRouterOptions = {}): Router {
  const router = Router();
  const maxBytes = ctx.env.SEISIFT_MAX_UPLOAD_BYTES;
  const maxFiles = ctx.env.SEISIFT_MAX_UPLOAD_FILES;
  const upload = multer({
    storage: multer.memoryStorage(),
    limits: { fileSize: maxBytes, files: maxFiles, fields: 5, fieldSize: 1024, parts: maxFiles + 5, headerPairs: 200 },
  }).any();

  const guard = (req: Request, _res: Response, next: NextFunction) => {
    uploadCaller(req);
    const declared = Number(req.headers['content-length'] ?? NaN);
    // Refuse at once when the declared body cannot fit the limits (files plus 64 KiB of multipart overhead per file).
    if (Number.isFinite(declared) && declared > maxFiles * (maxBytes + 65536)) {
      throw tooLarge(`The request body (${mb(declared)}) is larger than ${maxFiles} files of at most ${mb(maxBytes)} (SEISIFT_MAX_UPLOAD_FILES, SEISIFT_MAX_UPLOAD_BYTES)`);
    }
    if (!/^multipart\/form-data/i.test(req.headers['content-type'] ?? '')) {
      throw badRequest('files: send the files as multipart/form-data in the field "files"');
    }
    next();
  };

  const receive = (req: Request, res: Response, next: NextFunction) => {
    upload(req, res, (err: unknown) => {
      if (err instanceof multer.MulterError) {
        const file = err.field ? ` (field "${err.field}")` : '';
        if (err.code === 'LIMIT_FILE_SIZE') return next(tooLarge(`A file${file} is larger than the limit of ${mb(maxBytes)} per file (SEISIFT_MAX_UPLOAD_BYTES = ${maxBytes} bytes)`));
        if (err.code === 'LIMIT_FILE_COUNT') return next(tooLarge(`More than ${maxFiles} files in one request (SEISIFT_MAX_UPLOAD_FILES = ${maxFiles}); send them in several requests`));
        if (err.code === 'LIMIT_PART_COUNT' || err.code === 'LIMIT_FIELD_COUNT') return next(tooLarge(`Too many parts in one request: at most ${maxFiles} files and a streamId field`));
        if (err.code === 'LIMIT_FIELD_VALUE') return next(badRequest(`${err.field ?? 'field'}: the value is too long (at most 1024 bytes)`));
        return next(badRequest(`files: ${err.message}`));
      }
      next(err);
    });
  };

  router.post('/', guard, receive, async (req, res) => {
    const caller = uploadCaller(req);
    const fields = parseInput(uploadFieldsSchema, req.body ?? {});
    const files = (Array.isArray(req.files) ? req.files : []).filter((f) => f.fieldname === 'files' || f.fieldname === 'file');
    if (files.length === 0) throw badRequest('files: attach at least one file in the multipart field "files"');
    const deps: IngestDeps = {
      db: ctx.database.db,
      pool: opts.pool ?? defaultAnalysisPool(),
      notify: () => ctx.hub.notify(),
      logger: ctx.logger,
      ...(opts.beforeCommit ? { beforeCommit: opts.beforeCommit } : {}),
    };
    const result = await ingestFiles(
      deps,
      files.map((f) => ({ filename: f.originalname || 'upload', contentType: f.mimetype, bytes: f.buffer })),
      caller,
      fields.streamId ? { streamId: fields.streamId } : {},
    );
    res.status(result.status).json({ files: result.files });
  });

  return router;
}
