import type { ErrorRequestHandler, RequestHandler } from 'express';
import { MulterError } from 'multer';
import type { ApiErrorBody } from '@shared/api-error';
import { AppError } from '@server/errors';
import type { Logger } from '@server/logger';
import { isDatabaseDown } from '@server/db/availability';
import { clipInput } from '@shared/quote-input';

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
