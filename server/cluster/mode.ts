import { ConfigError } from '@server/env';

/** How `npm start` runs: one process (the default), or app instances and analysis workers on Redis. */
export type StartMode = { mode: 'single' } | { mode: 'cluster'; instances: number; workers: number };

/** Most processes of either kind one `npm start` supervises (a guard against a typo such as 100). */
export const MAX_PROCESSES = 32;

/**
 * The mode asked for by `npm start`'s arguments: none → single; `--instances N` and/or
 * `--workers M` (also `--instances=N`) → the multi-instance mode, the missing one being 1. N and M
 * are whole numbers from 1 to MAX_PROCESSES. Anything else is a ConfigError naming the argument.
 */
export function parseStartArgs(args: readonly string[]): StartMode {
  const counts: { instances?: number; workers?: number } = {};
  for (let i = 0; i < args.length; i++) {
    const arg = args[i] as string;
    const m = /^--(instances|workers)(?:=(.*))?$/.exec(arg);
    if (!m) throw new ConfigError(`npm start: unknown argument "${arg}" (expected --instances N and/or --workers M)`);
    const name = m[1] as 'instances' | 'workers';
    let value = m[2];
    if (value === undefined) {
      value = args[i + 1];
      i++;
    }
    if (value === undefined || !/^\d+$/.test(value) || Number(value) < 1 || Number(value) > MAX_PROCESSES) {
      throw new ConfigError(`npm start: --${name} needs a whole number from 1 to ${MAX_PROCESSES} (got ${value === undefined ? 'nothing' : `"${value}"`})`);
    }
    if (counts[name] !== undefined) throw new ConfigError(`npm start: --${name} given twice`);
    counts[name] = Number(value);
  }
  if (counts.instances === undefined && counts.workers === undefined) return { mode: 'single' };
  return { mode: 'cluster', instances: counts.instances ?? 1, workers: counts.workers ?? 1 };
}

/**
 * The ports of `instances` app instances from `basePort` on, one each (PORT, PORT + 1, …).
 * @throws ConfigError when the last would pass 65535
 */
export function instancePorts(basePort: number, instances: number): number[] {
  const last = basePort + instances - 1;
  if (last > 65535) throw new ConfigError(`PORT: ${instances} instances from port ${basePort} would need ports up to ${last} (> 65535)`);
  return Array.from({ length: instances }, (_, i) => basePort + i);
}
