import { spawnSync } from 'node:child_process';
import { createServer, type Server } from 'node:net';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';

/** Runs `npm start`'s bootstrap with extra settings and returns what it printed and its exit code. */
function start(env: Record<string, string>) {
  const r = spawnSync(process.execPath, ['server/bootstrap/run.mjs', 'start'], {
    env: { ...process.env, SEISIFT_SEED_DEMO: '0', ...env },
    encoding: 'utf8',
    timeout: 60_000,
  });
  return { code: r.status, stderr: r.stderr.trim(), stdout: r.stdout.trim() };
}

describe('npm start refuses bad configuration with one clear line', () => {
  let blocker: Server;
  let busyPort = 0;
  beforeAll(async () => {
    blocker = createServer();
    await new Promise<void>((ok) => blocker.listen(0, '127.0.0.1', () => ok()));
    const addr = blocker.address();
    busyPort = typeof addr === 'object' && addr ? addr.port : 0;
  });
  afterAll(() => new Promise<void>((ok) => blocker.close(() => ok())));

  it('a non-numeric PORT', () => {
    const r = start({ PORT: 'abc' });
    expect(r.code).toBe(1);
    expect(r.stderr).toBe('seisift: PORT: must be a whole number from 1 to 65535 (got "abc")');
  });

  it('a port in use', () => {
    const r = start({ PORT: String(busyPort) });
    expect(r.code).toBe(1);
    expect(r.stderr).toBe(`seisift: PORT: port ${busyPort} on 127.0.0.1 is already in use; stop the other program or choose another port`);
  });

  it('a data folder that cannot be written', () => {
    const r = start({ SEISIFT_DATA_DIR: '/proc/seisift-cannot-write-here' });
    expect(r.code).toBe(1);
    expect(r.stderr).toMatch(/^seisift: SEISIFT_DATA_DIR: the data folder \/proc\/seisift-cannot-write-here is not writable \(E[A-Z]+\)$/);
    expect(r.stderr.split('\n')).toHaveLength(1);
  });
});
