/**
 * `npm test`: installs what the tests need (MariaDB server, Debian's chromium, libmseed for the
 * reference fixtures), builds the client for the browser tests, runs every vitest test against a
 * throw-away MariaDB (tests/setup/global-setup.ts) and ends with one plain line
 * `tests: N passed, M failed` computed from vitest's JSON report. No test run is a failure.
 * The full run first type-checks (`tsc --noEmit`) and lints (`eslint .`) and stops on any error.
 * Extra arguments go to vitest (e.g. `npm test -- tests/server/dsp`); such a targeted run skips
 * the type check and the lint (`npm run lint` runs both alone).
 */
import { spawn } from 'node:child_process';
import { existsSync, mkdirSync, readFileSync, rmSync } from 'node:fs';
import { join, resolve } from 'node:path';
import { z } from 'zod';
import { buildClient, checkTypesAndLint, secondsSince } from './common';
import { BootstrapError, ensureDebianPackages, ensureMariaDbInstalled } from './mariadb';

const reportSchema = z.object({
  numTotalTests: z.number(),
  numPassedTests: z.number(),
  numFailedTests: z.number(),
  numPendingTests: z.number().optional(),
  numTodoTests: z.number().optional(),
});

const t0 = performance.now();
try {
  ensureMariaDbInstalled();
  // redis-server: the Redis adapter tests of the multi-instance mode (tests/server/cluster).
  ensureDebianPackages(['chromium', 'libmseed-dev', 'gcc', 'libc6-dev', 'python3-scipy', 'redis-server']);
  const vitestArgs = process.argv.slice(2);
  if (vitestArgs.length === 0) checkTypesAndLint();
  else console.log('seisift: a targeted run: type check and lint skipped (npm run lint)');
  console.log('seisift: building the client for the browser tests (with the design reference)…');
  buildClient({ devPages: true });

  const outDir = resolve('.data');
  mkdirSync(outDir, { recursive: true });
  const reportFile = join(outDir, `vitest-report-${process.pid}.json`);
  const args = ['node_modules/.bin/vitest', 'run', '--reporter=default', '--reporter=json', `--outputFile.json=${reportFile}`, ...vitestArgs];
  const code = await new Promise<number>((ok) => {
    const child = spawn(process.execPath, args, { stdio: 'inherit', env: { ...process.env, NO_COLOR: '1', NODE_ENV: 'test' } });
    process.on('SIGINT', () => child.kill('SIGINT'));
    process.on('SIGTERM', () => child.kill('SIGTERM'));
    child.on('exit', (c, signal) => ok(c ?? (signal ? 1 : 0)));
  });

  let passed = 0;
  let failed = 0;
  if (existsSync(reportFile)) {
    const report = reportSchema.parse(JSON.parse(readFileSync(reportFile, 'utf8')));
    passed = report.numPassedTests;
    failed = report.numFailedTests;
    rmSync(reportFile, { force: true });
  } else {
    console.error('seisift: vitest wrote no JSON report');
  }
  console.log(`seisift: npm test took ${secondsSince(t0)} s`);
  console.log(`tests: ${passed} passed, ${failed} failed`);
  process.exit(code !== 0 || failed > 0 || passed === 0 ? 1 : 0);
} catch (err) {
  console.error(`seisift: ${err instanceof BootstrapError ? err.message : err instanceof Error ? err.message : String(err)}`);
  console.log('tests: 0 passed, 1 failed');
  process.exit(1);
}
