import type { Request, RequestHandler } from 'express';
import { getRequestAuth } from '@server/auth/authenticate';
import type { Logger } from '@server/logger';

/** What one request line holds, and nothing else: no headers, no query string, no body. */
export type RequestLogFields = {
  method: string;
  /** The path without its query string (queries can carry filters and ids a log does not need). */
  path: string;
  status: number;
  /** Time from the request's arrival to the response's last byte handed to the socket, ms. */
  ms: number;
  /** The signed-in user's id; null for anonymous and ingest-token requests. */
  userId: string | null;
};

/** The fields of one finished request (pure, for the middleware and its test). */
export function requestLogFields(req: Pick<Request, 'method' | 'originalUrl'>, status: number, ms: number, userId: string | null): RequestLogFields {
  return { method: req.method, path: req.originalUrl.split('?')[0] ?? '', status, ms: Math.round(ms * 10) / 10, userId };
}

/**
 * One JSON line per request when its response finishes: method, path, status, duration and user id
 * (level `error` for 5xx, `warn` for 4xx, `info` otherwise). Headers are never logged: they carry
 * cookies and tokens, and logged whole they made the log grow by megabytes an hour. Health checks
 * (`skip`) are not logged, as probes call them every few seconds.
 * @param skip paths whose requests are not logged (default: /api/health)
 */
export function requestLog(logger: Logger, skip: readonly string[] = ['/api/health']): RequestHandler {
  return (req, res, next) => {
    const started = process.hrtime.bigint();
    res.on('finish', () => {
      const fields = requestLogFields(req, res.statusCode, Number(process.hrtime.bigint() - started) / 1e6, null);
      if (skip.includes(fields.path)) return;
      const auth = getRequestAuth(req);
      fields.userId = auth.kind === 'user' ? auth.user.id : null;
      const level = res.statusCode >= 500 ? 'error' : res.statusCode >= 400 ? 'warn' : 'info';
      logger[level](fields);
    });
    next();
  };
}
