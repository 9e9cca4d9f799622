/**
 * A pause a worker makes in its first attempt at a job, for the cluster tests only: with
 * NODE_ENV=test and SEISIFT_TEST_WORKER_HOLD_MS set, a file named `hold-before-commit-…` is held
 * inside the ingest transaction (every row written, nothing committed) and one named
 * `hold-after-commit-…` after the commit, before the job is marked done. The worker prints
 * `seisift-worker: holding <where> <job id>` as the pause starts, so a test can SIGKILL it then.
 * Every other file, and every process without both settings, goes straight through.
 */
export type TestHold = { where: 'before-commit' | 'after-commit'; ms: number };

/** The hold for a file named `filename`, or null. */
export function testHoldFor(filename: string, holdMs: string | undefined, nodeEnv: string): TestHold | null {
  if (nodeEnv !== 'test' || !holdMs || !/^\d{1,6}$/.test(holdMs)) return null;
  const m = /^hold-(before-commit|after-commit)-/.exec(filename);
  return m ? { where: m[1] as TestHold['where'], ms: Number(holdMs) } : null;
}
