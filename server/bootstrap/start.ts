/**
 * `npm start`: installs what is missing, starts (or reuses) the private MariaDB, migrates, seeds the
 * demo, builds the client, serves everything on one port and prints the URL and the demo sign-ins.
 * Ctrl-C / SIGTERM stops the app and the MariaDB it started.
 */
import { demoUsers } from '@server/db/seed-demo';
import type { AppContext } from '@server/context';
import { ingestDemo } from '@server/demo/ingest-demo';
import { prepareDemoEvents } from '@server/demo/demo-events';
import { ConfigError, loadEnv } from '@server/env';
import { FakeSmtpError } from '@server/email/fake-smtp';
import { setUpMail } from '@server/email/setup';
import { createLogger } from '@server/logger';
import { createAppContext, ListenError, startServer } from '@server/index';
import { appVersion } from '@server/version';
import { parseStartArgs } from '@server/cluster/mode';
import { buildClient, prepareApp, secondsSince } from './common';
import { openClusterRedis, startClusterProcesses } from './cluster-start';
import { BootstrapError, type PrivateMariaDb } from './mariadb';
import type { PrivateRedis } from './redis';

const t0 = performance.now();
let mariadb: PrivateMariaDb | undefined;
let redis: PrivateRedis | undefined;
let stopping = false;
const cleanups: (() => Promise<void>)[] = [];

async function shutdown(code: number): Promise<never> {
  if (!stopping) {
    stopping = true;
    for (const fn of cleanups.reverse()) await fn().catch(() => {});
    if (redis?.startedHere) {
      console.log('seisift: stopping Redis…');
      await redis.stop();
    }
    if (mariadb?.startedHere) {
      console.log('seisift: stopping MariaDB…');
      await mariadb.stop();
    }
  }
  process.exit(code);
}
process.on('SIGINT', () => void shutdown(0));
process.on('SIGTERM', () => void shutdown(0));

/**
 * Ingests demo-waveforms/ through the real ingest service and has the demo analyst work a handful
 * (server/demo/ingest-demo.ts); files already stored are skipped. A failure is reported and the
 * start goes on: the demo windows are a nicety, not something the app needs.
 */
async function ingestDemoWindows(ctx: AppContext): Promise<void> {
  try {
    const r = await ingestDemo({
      db: ctx.database.db,
      pool: ctx.analysisPool,
      notify: () => ctx.hub.notify(),
      logger: ctx.logger,
      escalationListeners: ctx.escalationListeners,
    });
    for (const f of r.rejected) console.warn(`seisift: demo file ${f.filename} was refused: ${f.message}`);
    console.log(
      r.created > 0
        ? `seisift: demo windows ingested (${r.created} files, ${r.items} queue items; the demo analyst dismissed ${r.historyDismissed} history windows as the stations' noise baseline, then labelled ${r.labelled}, dismissed ${r.dismissed}, escalated ${r.escalated}) in ${r.seconds.toFixed(1)} s`
        : `seisift: demo windows already ingested (${r.duplicates} of ${r.files} files)`,
    );
    const ev = await prepareDemoEvents(ctx.database.db, () => ctx.hub.notify());
    console.log(`seisift: demo events: ${ev.events} built or updated from the candidate groups (located, with ML; ${r.network.responses} channel responses from the demo StationXML${ev.modelSet || r.network.modelSet ? ', the demo crust set as the XX velocity model' : ''})`);
  } catch (err) {
    console.warn(`seisift: demo windows not ingested: ${err instanceof Error ? err.message : String(err)}`);
  }
}

try {
  // No arguments: the single-process mode. --instances N / --workers M: the multi-instance mode.
  const mode = parseStartArgs(process.argv.slice(2));
  const env = loadEnv({ NODE_ENV: 'production', ...process.env });
  const prepared = await prepareApp(env);
  mariadb = prepared.server;
  const { database } = prepared;
  cleanups.push(() => database.close());
  if (prepared.seeded) {
    const created = prepared.seeded;
    console.log(created.length ? `seisift: demo seeded (${created.length} new rows: ${created.join(', ')})` : 'seisift: demo data already present');
  }

  console.log('seisift: building the client…');
  buildClient();

  const logger = createLogger(env.LOG_LEVEL);
  // No SMTP_URL: start the local fake SMTP server (loopback only); the admin Mailbox page shows its mail.
  const mail = await setUpMail(env, database.db, { onError: (err) => logger.error({ err }, 'fake SMTP server error') });
  cleanups.push(() => mail.close());
  // Periodic work (expired sessions, claim lapse, change-log pruning…) runs in startServer's scheduler.
  const ctx = createAppContext({ env, database, mailer: mail.mailer, logger });
  cleanups.push(() => ctx.close());
  if (env.SEISIFT_SEED_DEMO === '1') await ingestDemoWindows(ctx);
  let url: string;
  let clusterLines: string[] = [];
  if (mode.mode === 'single') {
    const running = await startServer(ctx, { host: env.HOST, port: env.PORT, warmAnalysis: true });
    cleanups.push(() => running.close());
    url = running.url;
  } else {
    // The demo windows went in through this process; from here on the children serve and analyse.
    await ctx.close();
    const opened = await openClusterRedis(env);
    redis = opened.server;
    const childEnv: Record<string, string> = { DATABASE_URL: prepared.databaseUrl, SEISIFT_REDIS_URL: opened.url, NODE_ENV: env.NODE_ENV };
    // Every instance sends mail to this process's fake SMTP server (one mailbox for all).
    if (mail.fake) childEnv.SMTP_URL = mail.fake.url;
    const cluster = await startClusterProcesses(env, mode, childEnv);
    cleanups.push(() => cluster.stop());
    url = cluster.urls[0] ?? '';
    clusterLines = [
      `Multi-instance mode: ${mode.instances} app instance${mode.instances === 1 ? '' : 's'} (${cluster.urls.join(', ')}), ${mode.workers} analysis worker${mode.workers === 1 ? '' : 's'}, Redis ${opened.url}${redis ? ` (private, data in ${redis.dataDir})` : ''}.`,
      '',
    ];
  }

  const lines = [
    '',
    `Seisift ${appVersion} is ready in ${secondsSince(t0)} s: ${url}`,
    '',
    ...clusterLines,
    ...(env.SEISIFT_SEED_DEMO === '1'
      ? [
          `Demo sign-ins (demo only; password "${env.SEISIFT_DEMO_PASSWORD}"):`,
          ...demoUsers.map((u) => `  ${u.email.padEnd(28)} ${u.roles.join(', ')}`),
          '',
        ]
      : []),
    ...(mail.fake
      ? [`Mail: no SMTP_URL set, so a local test mail server on ${mail.fake.url} keeps every message; sign in as an admin and open ${url}/mailbox to read them.`, '']
      : [`Mail: sent through ${env.SMTP_URL?.replace(/\/\/[^@/]*@/, '//…@') ?? ''}`, '']),
    'Press Ctrl-C to stop.',
  ];
  console.log(lines.join('\n'));
} catch (err) {
  const known = err instanceof ConfigError || err instanceof BootstrapError || err instanceof ListenError || err instanceof FakeSmtpError;
  console.error(`seisift: ${known ? err.message : err instanceof Error ? `${err.message}` : String(err)}`);
  if (!known && process.env.SEISIFT_DEBUG === '1' && err instanceof Error) console.error(err.stack);
  await shutdown(1);
}
