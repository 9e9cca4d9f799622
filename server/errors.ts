/**
 * The one error type routes and services throw. The error handler renders it as
 * `{ error: { code, message, details } }` with `status`; anything else becomes 500 `internal_error`.
 */
export class AppError extends Error {
  override readonly name = 'AppError';
  constructor(
    readonly status: number,
    readonly code: string,
    message: string,
    readonly details?: unknown,
    /** Extra response headers, e.g. Retry-After. */
    readonly headers?: Record<string, string>,
  ) {
    super(message);
  }
}

/** 400: the request is malformed; `details` may name the field. */
export const badRequest = (message: string, details?: unknown) => new AppError(400, 'validation_failed', message, details);
/** 401: not signed in. */
export const unauthorized = (message = 'Sign in first') => new AppError(401, 'unauthenticated', message);
/** 403: signed in but not allowed. */
export const forbidden = (message = 'You may not do that') => new AppError(403, 'forbidden', message);
/** 404: no such resource (or not visible to this user). */
export const notFound = (what: string) => new AppError(404, 'not_found', `${what} not found`);
/** 409: a stale write or a state that no longer allows the change. */
export const conflict = (message: string, details?: unknown) => new AppError(409, 'conflict', message, details);
/** 413: over a size or count limit. */
export const tooLarge = (message: string) => new AppError(413, 'too_large', message);
/** 422: well-formed but unusable content (e.g. an undecodable file). */
export const unprocessable = (message: string, details?: unknown) => new AppError(422, 'unprocessable', message, details);
/** 429: rate limited. */
export const tooManyRequests = (retryAfterS: number) =>
  new AppError(429, 'rate_limited', `Too many attempts; try again in ${retryAfterS} s`, undefined, { 'Retry-After': String(retryAfterS) });
/** 503: a dependency (the database) is unavailable for now. */
export const unavailable = (message: string, retryAfterS = 5) =>
  new AppError(503, 'unavailable', message, undefined, { 'Retry-After': String(retryAfterS) });
