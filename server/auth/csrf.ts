import type { Request, RequestHandler } from 'express';
import { AppError } from '@server/errors';

const safeMethods = new Set(['GET', 'HEAD', 'OPTIONS']);

function originOf(value: string): string | null {
  try {
    const url = new URL(value);
    return url.protocol === 'http:' || url.protocol === 'https:' ? url.origin : null;
  } catch {
    return null;
  }
}

/** The origins this request may come from: the one it was addressed to, plus `extraOrigins`. */
function ownOrigins(req: Request, extraOrigins: readonly string[]): Set<string> {
  const own = new Set(extraOrigins.map((o) => originOf(o)).filter((o): o is string => o !== null));
  const host = req.headers.host;
  if (host) {
    own.add(`${req.protocol}://${host}`);
    // Behind a TLS-terminating loopback proxy the browser's origin is https while we see http.
    own.add(`https://${host}`);
  }
  return own;
}

/**
 * CSRF defence for every state-changing request (anything but GET/HEAD/OPTIONS): its Origin
 * header — or, when a browser sends none, its Referer — must be one of our own origins, else 403
 * `csrf_refused`. Requests with neither header are refused too, except scripts that authenticate
 * with `Authorization: Bearer` and send no session cookie (a browser cannot be tricked into
 * sending that header cross-site, common practice, OWASP CSRF Prevention Cheat Sheet).
 * @param extraOrigins further allowed origins, e.g. SEISIFT_PUBLIC_URL
 */
export function csrfProtection(opts: { extraOrigins?: readonly string[]; sessionCookieName: string }): RequestHandler {
  const extra = opts.extraOrigins ?? [];
  return (req, _res, next) => {
    if (safeMethods.has(req.method)) return next();
    const origin = typeof req.headers.origin === 'string' && req.headers.origin !== 'null' ? req.headers.origin : null;
    const referer = typeof req.headers.referer === 'string' ? req.headers.referer : null;
    const claimed = origin ?? referer;
    if (claimed === null) {
      const hasBearer = typeof req.headers.authorization === 'string' && /^Bearer\s+/i.test(req.headers.authorization);
      const hasSessionCookie = (req.headers.cookie ?? '').includes(`${opts.sessionCookieName}=`);
      if (hasBearer && !hasSessionCookie) return next();
      return next(new AppError(403, 'csrf_refused', 'The request has no Origin or Referer header; state-changing requests must come from Seisift pages'));
    }
    const claimedOrigin = originOf(claimed);
    if (claimedOrigin !== null && ownOrigins(req, extra).has(claimedOrigin)) return next();
    next(new AppError(403, 'csrf_refused', `Requests from ${claimedOrigin ?? 'that page'} may not change anything here`));
  };
}
