import type { ErrorRequestHandler, RequestHandler } from 'express';
import { MulterError } from 'multer';
import type { ApiErrorBody } from '../../shared/api-error';
import { clipInput } from '../../shared/quote-input';
import { AppError } from '../errors';
import type { Logger } from '../logger';

/** Error codes (mysql2, MariaDB, Node sockets) that mean "the database cannot be reached right now". */
const DATABASE_DOWN_CODES = new Set([
  'ECONNREFUSED',
  'ECONNRESET',
  'EPIPE',
  'ETIMEDOUT',
  'ENOTFOUND',
  'EHOSTUNREACH',
  'PROTOCOL_CONNECTION_LOST',
  'PROTOCOL_SEQUENCE_TIMEOUT',
  'PROTOCOL_ENQUEUE_AFTER_QUIT',
  'PROTOCOL_ENQUEUE_AFTER_FATAL_ERROR',
  'ER_CON_COUNT_ERROR',
  'ER_SERVER_SHUTDOWN',
  'ER_CONNECTION_KILLED',
  'ER_QUERY_INTERRUPTED',
]);

/**
 * True when `err` (or an error it wraps as `cause`, as drizzle's DrizzleQueryError does, up to 5
 * levels) says the database is unreachable: a connection code from DATABASE_DOWN_CODES, or
 * mysql2's uncoded "closed state" error of a connection the server dropped.
 */
export function isDatabaseDown(err: unknown): boolean {
  let e: unknown = err;
  for (let depth = 0; depth < 5 && e instanceof Error; depth++) {
    const code = (e as { code?: unknown }).code;
    if (typeof code === 'string' && DATABASE_DOWN_CODES.has(code)) return true;
    if (/connection is in closed state|Can't write in closed state|Pool is closed/.test(e.message)) return true;
    e = (e as { cause?: unknown }).cause;
  }
  return false;
}

/** Renders every error in the one API shape; unknown errors are logged and masked as 500. */
export function errorHandler(logger: Logger): ErrorRequestHandler {
  return (err: unknown, req, res, _next) => {
    let status = 500;
    let body: ApiErrorBody = { error: { code: 'internal_error', message: 'Something went wrong on the server' } };
    if (err instanceof AppError) {
      status = err.status;
      body = { error: { code: err.code, message: err.message, ...(err.details === undefined ? {} : { details: err.details }) } };
      for (const [k, v] of Object.entries(err.headers ?? {})) res.setHeader(k, v);
    } else if (err instanceof MulterError) {
      status = err.code === 'LIMIT_FILE_SIZE' || err.code === 'LIMIT_FILE_COUNT' ? 413 : 400;
      body = { error: { code: status === 413 ? 'too_large' : 'validation_failed', message: err.message } };
    } else if (err instanceof SyntaxError && 'body' in err) {
      status = 400;
      body = { error: { code: 'validation_failed', message: 'Request body is not valid JSON' } };
    } else if (typeof err === 'object' && err !== null && (err as { type?: unknown }).type === 'entity.too.large') {
      status = 413;
      body = { error: { code: 'too_large', message: 'Request body is too large' } };
    } else if (isDatabaseDown(err)) {
      status = 503;
      res.setHeader('Retry-After', '5');
      body = { error: { code: 'unavailable', message: 'The database is unavailable; try again shortly' } };
      logger.warn({ err, url: req.originalUrl }, 'database unavailable');
    } else {
      logger.error({ err, url: req.originalUrl }, 'unhandled error');
    }
    if (res.headersSent) return;
    res.status(status).json(body);
  };
}

/** 404 in the API shape for unknown /api routes. */
export const apiNotFound: RequestHandler = (req, _res, next) => {
  next(new AppError(404, 'not_found', `No API route ${req.method} ${clipInput(req.originalUrl.split('?')[0] ?? '')}`));
};
