import { spawn, type ChildProcess } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';

const entry = fileURLToPath(new URL('../serve.ts', import.meta.url));

/** A Seisift server running as a child process (tests/faults/serve.ts). */
export interface ChildServer {
  url: string;
  pid: number;
  child: ChildProcess;
  /** Everything it wrote to stdout and stderr so far. */
  output(): string;
  /** Sends `signal` and waits for the process to exit. */
  kill(signal: NodeJS.Signals): Promise<void>;
  /** Peak resident set size (VmHWM from /proc/PID/status), MB; NaN once it has exited. */
  peakRssMb(): number;
}

/**
 * Starts the server on 127.0.0.1:`port` over `databaseUrl` and waits for its "listening" line.
 * @throws when it exits or does not listen within 30 s (with its output)
 */
export async function startChildServer(opts: { databaseUrl: string; port: number; env?: Record<string, string>; nodeArgs?: string[] }): Promise<ChildServer> {
  const child = spawn(process.execPath, [...(opts.nodeArgs ?? []), '--import', 'tsx', entry], {
    env: { ...process.env, NODE_ENV: 'production', LOG_LEVEL: 'warn', ...opts.env, DATABASE_URL: opts.databaseUrl, HOST: '127.0.0.1', PORT: String(opts.port) },
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  let out = '';
  child.stdout?.on('data', (d: Buffer) => (out += d.toString('utf8')));
  child.stderr?.on('data', (d: Buffer) => (out += d.toString('utf8')));
  const exited = new Promise<void>((resolve) => child.once('exit', () => resolve()));
  const url = await new Promise<string>((resolve, reject) => {
    const timer = setTimeout(() => reject(new Error(`server did not start in 30 s:\n${out}`)), 30_000);
    const check = () => {
      const m = /seisift-fault-server listening (\S+)/.exec(out);
      if (m?.[1]) {
        clearTimeout(timer);
        resolve(m[1]);
      }
    };
    child.stdout?.on('data', check);
    child.once('exit', (code) => {
      clearTimeout(timer);
      reject(new Error(`server exited with ${code} before listening:\n${out}`));
    });
  });
  const pid = child.pid ?? 0;
  return {
    url,
    pid,
    child,
    output: () => out,
    async kill(signal) {
      if (child.exitCode !== null || child.signalCode !== null) return;
      child.kill(signal);
      await exited;
    },
    peakRssMb() {
      try {
        const m = /VmHWM:\s+(\d+) kB/.exec(readFileSync(`/proc/${pid}/status`, 'utf8'));
        return m?.[1] ? Number(m[1]) / 1024 : NaN;
      } catch {
        return NaN;
      }
    },
  };
}
