/**
 * A Seisift API server as its own process, for fault tests and benchmarks that must kill it
 * (SIGKILL) or read its memory from /proc: `node --import tsx tests/faults/serve.ts` with
 * DATABASE_URL, HOST and PORT in the environment. Mail goes to a local fake SMTP server on a free
 * port. Prints `seisift-fault-server listening <url> pid <pid>` once it accepts connections.
 * With BENCH_LOOP_LAG_MS=N (benchmarks) it also prints, every N ms, the event-loop delay of that
 * interval as `loop-lag {"maxMs":…,"p99Ms":…,"meanMs":…}` (node:perf_hooks monitorEventLoopDelay,
 * sampled every 10 ms, the 10 ms taken off): how long a timer due at a moment waited beyond it,
 * i.e. how long the event loop was held.
 */
import { monitorEventLoopDelay } from 'node:perf_hooks';
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
  const lagEveryMs = Number(process.env.BENCH_LOOP_LAG_MS ?? 0);
  if (lagEveryMs > 0) {
    const h = monitorEventLoopDelay({ resolution: 10 });
    h.enable();
    setInterval(() => {
      // The histogram holds each 10 ms sampling interval as it was measured: the delay is what exceeds 10 ms.
      const ms = (ns: number) => Math.max(0, Math.round((ns / 1e6 - 10) * 10) / 10);
      if (h.count > 0) console.log(`loop-lag ${JSON.stringify({ maxMs: ms(h.max), p99Ms: ms(h.percentile(99)), meanMs: ms(h.mean) })}`);
      h.reset();
    }, lagEveryMs).unref();
  }
  const shutdown = () => {
    void running.close().then(() => process.exit(0));
  };
  process.on('SIGTERM', shutdown);
  process.on('SIGINT', shutdown);
} catch (err) {
  console.error(`seisift-fault-server: ${err instanceof Error ? err.message : String(err)}`);
  process.exit(1);
}
