import { createServer, type Server } from 'node:http';
import type { AddressInfo } from 'node:net';
import type { IncomingMessage } from 'node:http';
import { createApp } from './app';
import type { ClusterLink } from './cluster/cluster-link';
import { oncePerCluster } from './cluster/periodic-lock';
import { createSessionStore } from './auth/sessions';
import type { Database, DatabaseClient } from './db/client';
import { loadActiveRights, loadAuthUser } from './auth/principal';
import { appJobs } from './jobs/app-jobs';
import { createLazyAnalysisPool, type AnalysisPool } from './jobs/analysis-pool';
import { startScheduler } from './jobs/scheduler';
import { createHub, type HubVerdict, type RealtimeHub } from './realtime/hub';
import type { Logger } from './logger';
import type { AppContext } from './context';
import { createDatabaseClient } from './db/client';
import type { Mailer } from './email/mailer';
import { setUpMail } from './email/setup';
import { ConfigError, loadEnv, type Env } from './env';
import { publicBaseUrl } from './email/links';
import { escalationListener } from './features/supervision/escalations';
import { createLogger } from './logger';
import { appVersion } from './version';

/** A running Seisift HTTP server. */
export interface RunningServer {
  server: Server;
  url: string;
  close(): Promise<void>;
}

/** Thrown when the HTTP port cannot be bound; one line for the terminal. */
export class ListenError extends Error {
  override readonly name = 'ListenError';
}

/**
 * Starts the HTTP server for `ctx` on host:port (port 0 picks a free one), with the live-update
 * hub on its upgrades and the one scheduler of periodic jobs (server/jobs/app-jobs.ts). With
 * `warmAnalysis` the analysis workers start at once (`npm start` and the instances ask for it; tests
 * that never draw traces leave it off).
 */
export async function startServer(ctx: AppContext, opts: { host: string; port: number; serveClient?: boolean; warmAnalysis?: boolean }): Promise<RunningServer> {
  const app = createApp(ctx, { serveClient: opts.serveClient });
  const server = createServer(app);
  ctx.hub.attach(server);
  // In the multi-instance mode every instance ticks, and the one that takes a job's turn in Redis runs it.
  const periodic = ctx.cluster ? oncePerCluster(appJobs(ctx), ctx.cluster.redis, ctx.cluster.instanceId, ctx.logger) : appJobs(ctx);
  const jobs = startScheduler(periodic, ctx.logger);
  await new Promise<void>((resolve, reject) => {
    server.once('error', (err: NodeJS.ErrnoException) => {
      if (err.code === 'EADDRINUSE') reject(new ListenError(`port ${opts.port} on ${opts.host} is already in use: stop the other program or set PORT`));
      else if (err.code === 'EACCES') reject(new ListenError(`not allowed to listen on port ${opts.port}: choose a PORT above 1023`));
      else reject(err);
    });
    server.listen(opts.port, opts.host, () => resolve());
  });
  // A serving instance draws traces: its analysis workers start now, not with the first request.
  if (opts.warmAnalysis) ctx.analysisPool.warm?.();
  const { port } = server.address() as AddressInfo;
  const url = `http://${opts.host}:${port}`;
  return {
    server,
    url,
    close: () =>
      new Promise<void>((resolve) => {
        void ctx.hub.close();
        void jobs.stop();
        server.close(() => resolve());
        server.closeAllConnections();
      }),
  };
}

/**
 * The live-update hub of one app: upgrades are authenticated with the session cookie (an active
 * user) and allowed only from our own origin — the one the Host header names (http or https) or
 * SEISIFT_PUBLIC_URL.
 */
export function createAppHub(db: Database, logger: Logger, env: Env, cluster?: ClusterLink): RealtimeHub {
  const sessions = createSessionStore(db, { idleHours: env.SEISIFT_SESSION_IDLE_HOURS });
  const publicOrigin = env.SEISIFT_PUBLIC_URL ? new URL(env.SEISIFT_PUBLIC_URL).origin : null;
  const same = (a: readonly (string | number)[], b: readonly (string | number)[]) => a.length === b.length && a.every((v, i) => v === b[i]);
  return createHub({
    db,
    logger,
    // Multi-instance mode: each commit is published to the other processes' hubs, which are woken
    // by Redis pub/sub; the change-log poll stays as the safety net, less often.
    ...(cluster ? { onNotify: () => cluster.publisher.notify(), pollMs: 5000 } : {}),
    async authenticate(req: IncomingMessage) {
      const id = sessions.readCookie(req.headers.cookie);
      if (!id) return null;
      const session = await sessions.validate(id);
      if (!session) return null;
      const user = await loadAuthUser(db, session.userId);
      return user ? { id: user.id, sessionId: session.id, roles: user.roles, stationIds: user.stationIds } : null;
    },
    // Every open socket at once: which sessions are still open, and the rights of their active
    // users (both sorted as loadAuthUser sorts them, so an unchanged person compares equal).
    async recheck(principals) {
      const open = await sessions.stillOpen(principals.map((p) => p.sessionId));
      const rights = await loadActiveRights(db, principals.map((p) => p.id));
      const verdicts = new Map<string, HubVerdict>();
      for (const p of principals) {
        const now = rights.get(p.id);
        if (!open.has(p.sessionId) || !now) verdicts.set(p.sessionId, 'ended');
        else verdicts.set(p.sessionId, same(now.roles, p.roles) && same(now.stationIds, p.stationIds) ? 'ok' : 'changed');
      }
      return verdicts;
    },
    originAllowed(origin, req) {
      if (!origin) return false;
      if (publicOrigin && origin === publicOrigin) return true;
      const host = req.headers.host;
      return host !== undefined && (origin === `http://${host}` || origin === `https://${host}`);
    },
  });
}

/** What the caller brings to `createAppContext`; the database and the mail setup stay the caller's to close. */
export interface AppContextParts {
  env: Env;
  database: DatabaseClient;
  mailer: Mailer;
  /** Default: a logger at LOG_LEVEL. */
  logger?: Logger;
  /** Default: SEISIFT_ANALYSIS_THREADS worker threads, started with the first window. */
  analysisPool?: AnalysisPool;
  /** The multi-instance mode's link to Redis (`openClusterLink`); the caller's to close. Absent: single-process mode. */
  cluster?: ClusterLink;
}

/** An app context and how to stop what it started (the hub and the analysis workers). */
export type OwnedAppContext = AppContext & { close(): Promise<void> };

/**
 * The composition root: the one place an app context is built and its listeners wired (the
 * server, `npm start`, the tests and the benchmarks all come here).
 */
export function createAppContext(parts: AppContextParts): OwnedAppContext {
  const { env, database, mailer } = parts;
  const logger = parts.logger ?? createLogger(env.LOG_LEVEL);
  const { cluster } = parts;
  const hub = createAppHub(database.db, logger, env, cluster);
  if (cluster) {
    cluster.subscribe(() => hub.wake()).catch((err: unknown) => logger.warn({ err }, 'live wake-ups: subscribe failed; the hub reads the change log every 5 s until Redis is back'));
  }
  const analysisPool = parts.analysisPool ?? createLazyAnalysisPool(env.SEISIFT_ANALYSIS_THREADS);
  // Escalations reach every supervisor by e-mail and in the inbox.
  const escalationListeners = [escalationListener({ db: database.db, mailer, logger, notify: () => hub.notify(), publicUrl: publicBaseUrl(env) })];
  return {
    env,
    database,
    logger,
    version: appVersion,
    hub,
    mailer,
    analysisPool,
    escalationListeners,
    ...(cluster ? { cluster } : {}),
    async close() {
      await hub.close();
      await analysisPool.close();
    },
  };
}

// `tsx watch server/index.ts` (npm run dev): serve the API against DATABASE_URL.
if (import.meta.url === `file://${process.argv[1]}`) {
  try {
    const env = loadEnv();
    if (!env.DATABASE_URL) throw new ConfigError('DATABASE_URL: required when the server runs on its own (npm run dev sets it)');
    // SMTP_URL unset: the local fake SMTP server keeps mail for the admin mailbox page.
    const mail = await setUpMail(env, createDatabaseClient(env.DATABASE_URL, { connectionLimit: 2 }).db);
    const ctx = createAppContext({ env, database: createDatabaseClient(env.DATABASE_URL), mailer: mail.mailer });
    const running = await startServer(ctx, { host: env.HOST, port: env.PORT, serveClient: false });
    console.log(`seisift: API on ${running.url}${mail.fake ? `; local test mail server on ${mail.fake.url} (admin page: Mailbox)` : ''}`);
  } catch (err) {
    console.error(`seisift: ${err instanceof Error ? err.message : String(err)}`);
    process.exit(1);
  }
}
