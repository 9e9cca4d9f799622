import { execFileSync } from 'node:child_process';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { libmseedDumpSchema, type LibmseedDump } from './libmseed-json';

const SOURCE = join(import.meta.dirname, '../../fixtures/mseed/write-fixtures.c');

/**
 * Compiles tests/fixtures/mseed/write-fixtures.c against libmseed (Debian libmseed-dev) into a
 * temporary directory and returns a function that decodes a MiniSEED file with libmseed.
 * Throws (so the test fails, never skips) when the compiler or libmseed is missing.
 */
export function buildLibmseedDump(): { dump: (bytes: Uint8Array) => LibmseedDump; dir: string } {
  const dir = mkdtempSync(join(tmpdir(), 'seisift-libmseed-'));
  const exe = join(dir, 'write-fixtures');
  let compiled = false;
  let detail = '';
  for (const compiler of ['cc', 'gcc']) {
    try {
      execFileSync(compiler, ['-O1', '-o', exe, SOURCE, '-lmseed', '-lm'], { stdio: 'pipe' });
      compiled = true;
      break;
    } catch (err) {
      detail += `${compiler}: ${err instanceof Error ? err.message : String(err)}\n`;
    }
  }
  if (!compiled) {
    throw new Error(`cannot compile ${SOURCE} against libmseed (install Debian libmseed-dev and gcc):\n${detail}`);
  }
  let n = 0;
  const dump = (bytes: Uint8Array): LibmseedDump => {
    const file = join(dir, `input-${n++}.mseed`);
    writeFileSync(file, bytes);
    const out = execFileSync(exe, ['dump', file], { encoding: 'utf8', maxBuffer: 64 * 1024 * 1024 });
    return libmseedDumpSchema.parse(JSON.parse(out));
  };
  return { dump, dir };
}
