import { Router, type NextFunction, type Request, type Response } from 'express';
import multer from 'multer';
import { can } from '@shared/auth/policies';
import { clipInput } from '@shared/quote-input';
import { uploadFieldsSchema } from '@shared/schemas/upload';
import type { AppContext } from '@server/context';
import { badRequest, forbidden, tooLarge, unauthorized, type AppError } from '@server/errors';
import { clientAddress, getRequestAuth } from '@server/auth/authenticate';
import { parseIsoTimeUs } from '@server/formats/iso-time';
import { parseInput } from '@server/http/validate';
import { ingestFiles, type IngestCaller, type IngestDeps } from './ingest-upload';

const mb = (bytes: number) => `${Math.round((bytes / 1024 / 1024) * 100) / 100} MB`;

/** Options of the uploads router (tests pass a failure hook; the analysis pool is the context's). */
export interface UploadsRouterOptions {
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
 * Answers `err` now and closes the connection once the answer is written. Needed because multer,
 * after a limit error, drains the rest of the body before it reports, so a client streaming
 * 200 MB (or a body without end) would be read in full before hearing 413. Later errors for the
 * same request find the headers sent and are dropped by the error handler.
 */
function refuseNow(req: Request, res: Response, err: AppError): void {
  if (res.headersSent) return;
  res.setHeader('Connection', 'close');
  res.status(err.status).json({ error: { code: err.code, message: err.message } });
  res.once('finish', () => setImmediate(() => req.socket.destroy()));
}

/**
 * multer's memory storage plus the limits checked as the bytes arrive: the file past
 * SEISIFT_MAX_UPLOAD_FILES, or a file growing past SEISIFT_MAX_UPLOAD_BYTES, is answered 413 at
 * once (refuseNow). Files within the limits are kept in memory as `buffer`, as memoryStorage does.
 */
function earlyRefusalStorage(maxBytes: number, maxFiles: number): multer.StorageEngine {
  const filesSeen = new WeakMap<Request, number>();
  return {
    _handleFile(req, file, cb) {
      const res = req.res;
      const n = (filesSeen.get(req) ?? 0) + 1;
      filesSeen.set(req, n);
      if (n > maxFiles) {
        if (res) refuseNow(req, res, tooLarge(`More than ${maxFiles} files in one request (SEISIFT_MAX_UPLOAD_FILES = ${maxFiles}); send them in several requests`));
        file.stream.resume();
        cb(new multer.MulterError('LIMIT_FILE_COUNT'));
        return;
      }
      const chunks: Buffer[] = [];
      let size = 0;
      let refused = false;
      const tooBig = () => {
        if (refused) return;
        refused = true;
        chunks.length = 0;
        if (res) refuseNow(req, res, tooLarge(`A file (field "${clipInput(file.fieldname)}") is larger than the limit of ${mb(maxBytes)} per file (SEISIFT_MAX_UPLOAD_BYTES = ${maxBytes} bytes)`));
      };
      file.stream.on('data', (chunk: Buffer) => {
        size += chunk.length;
        if (size > maxBytes) tooBig();
        else if (!refused) chunks.push(chunk);
      });
      file.stream.on('limit', tooBig);
      file.stream.on('error', (err) => cb(err));
      file.stream.on('end', () => {
        if (refused) return cb(new multer.MulterError('LIMIT_FILE_SIZE', file.fieldname));
        cb(null, { buffer: Buffer.concat(chunks, size), size });
      });
    },
    _removeFile(_req, file, cb) {
      // Drop the buffer so a refused request holds no file bytes.
      Object.assign(file, { buffer: Buffer.alloc(0) });
      cb(null);
    },
  };
}

/**
 * POST /api/uploads: multipart with one or more files in the field `files` (MiniSEED 2/3 or CSV),
 * an optional `streamId` and an optional `startTime` (t = 0 of relative seconds) for CSV. Authenticated by session or ingest token BEFORE the body is
 * read; multer's limits (SEISIFT_MAX_UPLOAD_BYTES per file, SEISIFT_MAX_UPLOAD_FILES per request)
 * stop reading as soon as one is passed → 413 naming the limit. Answers `{ files: [outcome…] }`
 * with 201 when any file was created (see overallStatus for the rest).
 */
export function uploadsRouter(ctx: AppContext, opts: UploadsRouterOptions = {}): Router {
  const router = Router();
  const maxBytes = ctx.env.SEISIFT_MAX_UPLOAD_BYTES;
  const maxFiles = ctx.env.SEISIFT_MAX_UPLOAD_FILES;
  // busboy's own file-count limit is one higher, so the file past the limit reaches our storage
  // engine, which refuses it at once (multer's own limit error waits for the whole body).
  const upload = multer({
    storage: earlyRefusalStorage(maxBytes, maxFiles),
    // Browsers and curl send UTF-8 file names without a charset parameter (busboy assumes latin1).
    defParamCharset: 'utf8',
    limits: { fileSize: maxBytes, files: maxFiles + 1, fields: 5, fieldSize: 1024, parts: maxFiles + 6, headerPairs: 200 },
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
        const file = err.field ? ` (field "${clipInput(err.field)}")` : '';
        if (err.code === 'LIMIT_FILE_SIZE') return next(tooLarge(`A file${file} is larger than the limit of ${mb(maxBytes)} per file (SEISIFT_MAX_UPLOAD_BYTES = ${maxBytes} bytes)`));
        if (err.code === 'LIMIT_FILE_COUNT') return next(tooLarge(`More than ${maxFiles} files in one request (SEISIFT_MAX_UPLOAD_FILES = ${maxFiles}); send them in several requests`));
        if (err.code === 'LIMIT_PART_COUNT' || err.code === 'LIMIT_FIELD_COUNT') return next(tooLarge(`Too many parts in one request: at most ${maxFiles} files, a streamId and a startTime field`));
        if (err.code === 'LIMIT_FIELD_VALUE') return next(badRequest(`${clipInput(err.field ?? 'field')}: the value is too long (at most 1024 bytes)`));
        return next(badRequest(`files: ${err.message}`));
      }
      next(err);
    });
  };

  router.post('/', guard, receive, async (req, res) => {
    const caller = uploadCaller(req);
    const fields = parseInput(uploadFieldsSchema, req.body ?? {});
    const startTimeUs = fields.startTime === undefined ? undefined : parseIsoTimeUs(fields.startTime);
    if (fields.startTime !== undefined && startTimeUs === undefined) throw badRequest(`startTime: "${fields.startTime.slice(0, 40)}" is not a valid date and time (e.g. 2026-03-14T09:26:53.589Z)`);
    const files = (Array.isArray(req.files) ? req.files : []).filter((f) => f.fieldname === 'files' || f.fieldname === 'file');
    if (files.length === 0) throw badRequest('files: attach at least one file in the multipart field "files"');
    const deps: IngestDeps = {
      db: ctx.database.db,
      pool: ctx.analysisPool,
      notify: () => ctx.hub.notify(),
      logger: ctx.logger,
      limits: { maxSamples: ctx.env.SEISIFT_MAX_WINDOW_SAMPLES, maxDurationS: ctx.env.SEISIFT_MAX_WINDOW_S },
      ...(opts.beforeCommit ? { beforeCommit: opts.beforeCommit } : {}),
    };
    const received = files.map((f) => ({ filename: f.originalname || 'upload', contentType: f.mimetype, bytes: f.buffer }));
    const ingestOptions = { ...(fields.streamId ? { streamId: fields.streamId } : {}), ...(startTimeUs !== undefined ? { startTimeUs } : {}) };
    // Multi-instance mode: the files go to the analysis job queue and a worker process ingests
    // each; this request waits for their outcomes (server/cluster/analyse-jobs.ts).
    const result = ctx.cluster ? await ctx.cluster.uploads.ingest(received, caller, ingestOptions) : await ingestFiles(deps, received, caller, ingestOptions);
    res.status(result.status).json({ files: result.files });
  });

  return router;
}
