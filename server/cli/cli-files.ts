/**
 * What the command-line tools share: reading their arguments with `node:util` parseArgs (usage
 * errors exit 1 with the usage line, `--help` prints it), reading the waveform and JSON files they are
 * given, and the decoder's message without the file-name prefix (the commands name the file
 * themselves). Exit codes: 1 for a usage error, 2 for a file that cannot be read or decoded.
 */
import { readFileSync } from 'node:fs';
import { basename } from 'node:path';
import { parseArgs, type ParseArgsConfig } from 'node:util';

/** The outcome of a command-line run (for tests: no process exit inside). */
export interface CliOutcome<Code extends number = number> {
  code: Code;
  stdout: string;
  stderr: string;
}

/** The message of a thrown value. */
export function message(err: unknown): string {
  return err instanceof Error ? err.message : String(err);
}

/**
 * Parses `argv` (positionals allowed) with the given options and a `--help`/`-h` flag: the parsed
 * values, or the outcome to return (exit 1 with the usage on an unknown option, exit 0 with the
 * usage for `--help`).
 */
export function parseCli<O extends NonNullable<ParseArgsConfig['options']>>(argv: string[], options: O, help: string) {
  let args;
  try {
    args = parseArgs({ args: argv, allowPositionals: true, options: { ...options, help: { type: 'boolean', short: 'h', default: false } } });
  } catch (err) {
    return { outcome: { code: 1, stdout: '', stderr: `${message(err)}\n${help}\n` } satisfies CliOutcome<1> };
  }
  if ((args.values as Record<string, unknown>).help === true) return { outcome: { code: 0, stdout: `${help}\n`, stderr: '' } satisfies CliOutcome<0> };
  return { args };
}

/** The bytes of a waveform file, or the exit-2 outcome naming the file and why it cannot be read. */
export function readWaveformFile(file: string): { bytes: Uint8Array } | { outcome: CliOutcome<2> } {
  try {
    return { bytes: readFileSync(file) };
  } catch (err) {
    return { outcome: { code: 2, stdout: '', stderr: `cannot read ${file}: ${message(err)}\n` } };
  }
}

/** The decoder's message without the `FILE: ` prefix it adds. */
export function decodeMessage(err: unknown, file: string): string {
  const m = message(err);
  const prefix = `${basename(file)}: `;
  return m.startsWith(prefix) ? m.slice(prefix.length) : m;
}

/** The JSON in a file; throws an Error naming `what`, the path and the problem. */
export function readJsonFile(path: string, what: string): unknown {
  let text: string;
  try {
    text = readFileSync(path, 'utf8');
  } catch (err) {
    throw new Error(`cannot read ${what} ${path}: ${message(err)}`);
  }
  try {
    return JSON.parse(text);
  } catch (err) {
    throw new Error(`${what} ${path} is not JSON: ${message(err)}`);
  }
}
