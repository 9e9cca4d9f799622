import express, { type Express } from 'express';
import { existsSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { createAuthKit } from './auth/kit';
import { sessionCookieName } from './auth/sessions';
import type { AppContext } from './context';
import { authenticate } from './auth/authenticate';
import { csrfProtection } from './auth/csrf';
import { notFound } from './errors';
import { apiNotFound, errorHandler } from './http/error-handler';
import { clipInput } from '@shared/quote-input';
import { requestLog } from './http/request-log';
import { securityHeaders } from './http/security-headers';
import { accountRouter } from './features/accounts/account-router';
import { adminRouter } from './features/accounts/admin-router';
import { auditRouter } from './features/audit/router';
import { authRouter } from './features/accounts/auth-router';
import { eventsRouter } from './features/events/router';
import { eventReturnRouter } from './features/supervision/event-return';
import { healthRouter } from './features/health/router';
import { openApiRouter } from './openapi/router';
import { queueRouter } from './features/queue/router';
import { stationsRouter } from './features/stations/router';
import { supervisorRouter } from './features/supervision/router';
import { similarityRouter } from './features/similarity/router';
import { uploadsRouter, type UploadsRouterOptions } from './features/ingest/router';
import { ingestTokenResolver } from './features/stations/station-registry';

/** The built client (vite build output). */
export const clientDistDir = fileURLToPath(new URL('../dist/client', import.meta.url));

/**
 * Builds the Express app: JSON API under /api, the built client with an SPA fallback for every
 * other GET. Used by the server and by supertest.
 */
export function createApp(ctx: AppContext, opts: { serveClient?: boolean; uploads?: UploadsRouterOptions } = {}): Express {
  const app = express();
  app.disable('x-powered-by');
  app.use(securityHeaders(clientDistDir));
  // X-Forwarded-* are believed only from the proxies TRUST_PROXY names (default none): otherwise
  // any client could choose its own address for the sign-in limits and the audit log.
  app.set('trust proxy', ctx.env.TRUST_PROXY.length > 0 ? ctx.env.TRUST_PROXY : false);
  // One short line per request (method, path, status, ms, user id); never the headers.
  app.use(requestLog(ctx.logger));
  app.use(express.json({ limit: '1mb' }));

  // Who is asking (session cookie, or `Authorization: Bearer` with a station's ingest token) and the CSRF check.
  const auth = createAuthKit(ctx);
  app.use('/api', authenticate({ db: ctx.database.db, sessions: auth.sessions, bearer: ingestTokenResolver(ctx.database.db) }));
  app.use('/api', csrfProtection({ sessionCookieName, extraOrigins: ctx.env.SEISIFT_PUBLIC_URL ? [ctx.env.SEISIFT_PUBLIC_URL] : [] }));

  app.use('/api/health', healthRouter(ctx));
  app.use('/api/auth', authRouter(ctx, auth));
  app.use('/api/account', accountRouter(ctx, auth));
  app.use('/api/admin', adminRouter(ctx, auth));
  app.use('/api/audit', auditRouter(ctx));
  app.use('/api/queue', queueRouter(ctx));
  app.use('/api/supervisor', supervisorRouter(ctx));
  app.use('/api/supervisor', eventReturnRouter(ctx));
  app.use('/api/events', eventsRouter(ctx));
  app.use('/api/stations', stationsRouter(ctx));
  app.use('/api/similarity', similarityRouter(ctx));
  app.use('/api/uploads', uploadsRouter(ctx, opts.uploads));
  app.use('/api/openapi.json', openApiRouter(ctx));
  app.use('/api', apiNotFound);

  if (opts.serveClient !== false && existsSync(clientDistDir)) {
    // The build names every file under assets/ by a hash of its content (a changed file is a new
    // name), so a browser keeps them for a year without asking again (common practice for hashed
    // build files); a name the build does not have is a 404, not the page.
    app.use('/assets', express.static(join(clientDistDir, 'assets'), { index: false, immutable: true, maxAge: '1y' }));
    app.use('/assets', (req, _res, next) => next(notFound(`Built file ${clipInput(req.originalUrl.split('?')[0] ?? '')}`)));
    app.use(express.static(clientDistDir, { index: false, maxAge: '1h' }));
    app.get('/{*splat}', (_req, res) => {
      res.setHeader('Cache-Control', 'no-cache');
      res.sendFile('index.html', { root: clientDistDir });
    });
  }
  app.use(errorHandler(ctx.logger));
  return app;
}
