/**
 * A Seisift API server as its own process, for fault tests and benchmarks that must kill it
 * (SIGKILL) or read its memory from /proc: `node --import tsx tests/faults/serve.ts` with
 * DATABASE_URL, HOST and PORT in the environment. Mail goes to a local fake SMTP server on a free
 * port. Prints `seisift-fault-server listening <url> pid <pid>` once it accepts connections.
 */
import { createDatabaseClient } from '@server/db/client';
import { setUpMail } from '@server/email/setup';
import { ConfigError, loadEnv } from '@server/env';
import { createAppContext, startServer } from '@server/index';

try {
  const env = loadEnv();
  if (!env.DATABASE_URL) throw new ConfigError('DATABASE_URL: required');
  const mail = await setUpMail({ ...env, SMTP_URL: undefined }, createDatabaseClient(env.DATABASE_URL, { connectionLimit: 2 }).db, { fakePort: 0 });
  const ctx = createAppContext({ env, database: createDatabaseClient(env.DATABASE_URL), mailer: mail.mailer });
  const running = await startServer(ctx, { host: env.HOST, port: env.PORT, serveClient: false });
  console.log(`seisift-fault-server listening ${running.url} pid ${process.pid}`);
  const shutdown = () => {
    void running.close().then(() => process.exit(0));
  };
  process.on('SIGTERM', shutdown);
  process.on('SIGINT', shutdown);
} catch (err) {
  console.error(`seisift-fault-server: ${err instanceof Error ? err.message : String(err)}`);
  process.exit(1);
}
