/**
 * A pause a worker makes in its first attempt at a job, for the cluster tests only (NODE_ENV=test):
 * SEISIFT_TEST_WORKER_HOLD=`before-commit:<ms>` holds inside the ingest transaction, with every row
 * written and nothing committed; `after-commit:<ms>` holds after the commit, before the job is
 * marked done. The worker prints `seisift-worker: holding <where> <job id>` when it starts the
 * pause, so a test can SIGKILL it right then.
 */
export type TestHold = { where: 'before-commit' | 'after-commit'; ms: number };

/** The hold that `value` asks for, or null (unset, malformed, or not NODE_ENV=test). */
export function parseTestHold(value: string | undefined, nodeEnv: string): TestHold | null {
  if (nodeEnv !== 'test' || !value) return null;
  const m = /^(before-commit|after-commit):(\d{1,6})$/.exec(value);
  return m ? { where: m[1] as TestHold['where'], ms: Number(m[2]) } : null;
}
