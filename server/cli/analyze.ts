import { basename } from 'node:path';
import { pathToFileURL } from 'node:url';
import { z } from 'zod';
import { decodeWaveform } from '@server/formats/decode';
import { WaveformParseError, type DecodedStream } from '@server/formats/types';
import { analyzeWindow, type AnalysisResult } from '@server/dsp/pipeline';
import { processingProfileSchema, type ProcessingProfile } from '@shared/schemas/processing-profile';
import { decodeMessage, message, parseCli, readJsonFile, readWaveformFile, type CliOutcome } from './cli-files';

/**
 * `npm run analyze -- FILE [--profile profile.json] [--sensitivity N] [--stream NET.STA.LOC.CHA] [--json]`
 *
 * Decodes a waveform file (MiniSEED 2/3 or CSV) and analyses it without a server: a table, or with
 * `--json` one JSON object (the output contract of `analyzeWindow`).
 * - `--stream`: the stream id of a CSV without one (a placeholder is used when absent); for a file
 *   with several stations, picks the station whose channels are analysed.
 * - `--sensitivity`: counts per m/s for every channel (physical units, noise-model position).
 * Exit codes: 0 done; 1 usage, profile or analysis error; 2 the file cannot be read or decoded
 * (the reason on stderr).
 */

/** Stream id used for a CSV without one when `--stream` is not given. */
export const PLACEHOLDER_STREAM_ID = 'XX.NOID..UNK';

/** The outcome of a CLI run (for tests: no process exit inside). */
export type { CliOutcome } from './cli-files';

const HELP = 'usage: npm run analyze -- FILE [--profile profile.json] [--sensitivity N] [--stream NET.STA.LOC.CHA] [--json]';

/** Run the command line on arguments (without `node script`); never exits the process. */
export function runAnalyzeCli(argv: string[]): CliOutcome {
  const parsed = parseCli(argv, { profile: { type: 'string' }, sensitivity: { type: 'string' }, stream: { type: 'string' }, json: { type: 'boolean', default: false } }, HELP);
  if (!parsed.args) return parsed.outcome;
  const args = parsed.args;
  const file = args.positionals[0];
  if (!file || args.positionals.length > 1) return { code: 1, stdout: '', stderr: `give exactly one FILE\n${HELP}\n` };

  let profile: ProcessingProfile;
  try {
    profile = args.values.profile ? loadProfile(args.values.profile) : processingProfileSchema.parse({});
  } catch (err) {
    return { code: 1, stdout: '', stderr: `${message(err)}\n` };
  }
  let sensitivity: number | undefined;
  if (args.values.sensitivity !== undefined) {
    const parsed = z.coerce.number().positive().finite().safeParse(args.values.sensitivity);
    if (!parsed.success) return { code: 1, stdout: '', stderr: `--sensitivity must be a positive number of counts per m/s, got '${args.values.sensitivity}'\n` };
    sensitivity = parsed.data;
  }

  const read = readWaveformFile(file);
  if ('outcome' in read) return read.outcome;
  const bytes = read.bytes;
  let streams: DecodedStream[];
  let note = '';
  try {
    streams = decode(bytes, basename(file), args.values.stream);
  } catch (err) {
    if (err instanceof WaveformParseError && /no stream id/.test(err.message) && args.values.stream === undefined) {
      try {
        streams = decode(bytes, basename(file), PLACEHOLDER_STREAM_ID);
        note = `note: the CSV names no stream: placeholder ${PLACEHOLDER_STREAM_ID} used (give --stream NET.STA.LOC.CHA)\n`;
      } catch (err2) {
        return { code: 2, stdout: '', stderr: `cannot decode ${file}: ${decodeMessage(err2, file)}\n` };
      }
    } else {
      return { code: 2, stdout: '', stderr: `cannot decode ${file}: ${decodeMessage(err, file)}\n` };
    }
  }

  const stations = [...new Set(streams.map((s) => `${s.network}.${s.station}`))];
  let chosen = streams;
  if (stations.length > 1 || (args.values.stream !== undefined && streams.some((s) => s.format !== 'csv'))) {
    const want = args.values.stream;
    const match = want ? streams.find((s) => s.id === want) : undefined;
    if (!match) {
      return {
        code: 1,
        stdout: '',
        stderr: want
          ? `stream ${want} is not in ${file} (it holds ${streams.map((s) => s.id).join(', ')})\n`
          : `${file} holds ${stations.length} stations (${stations.join(', ')}): choose one with --stream NET.STA.LOC.CHA\n`,
      };
    }
    chosen = streams.filter((s) => s.network === match.network && s.station === match.station);
  }

  let result: AnalysisResult;
  try {
    const sens = sensitivity === undefined ? undefined : Object.fromEntries(chosen.map((s) => [s.id, sensitivity]));
    result = analyzeWindow(chosen, profile, sens ? { sensitivity: sens } : {});
  } catch (err) {
    return { code: 1, stdout: '', stderr: `${note}cannot analyse ${file}: ${message(err)}\n` };
  }
  return { code: 0, stdout: args.values.json ? `${JSON.stringify(result)}\n` : table(result), stderr: note };
}

function decode(bytes: Uint8Array, filename: string, streamId: string | undefined): DecodedStream[] {
  return decodeWaveform(bytes, streamId === undefined ? { filename } : { filename, streamId });
}

function loadProfile(path: string): ProcessingProfile {
  const parsed = processingProfileSchema.safeParse(readJsonFile(path, 'the profile'));
  if (!parsed.success) {
    const issue = parsed.error.issues[0];
    throw new Error(`profile ${path}: ${issue ? `${issue.path.join('.') || '(top level)'}: ${issue.message}` : 'invalid'}`);
  }
  return parsed.data;
}

const num = (v: number | null, digits = 3): string => {
  if (v === null) return '—';
  const a = Math.abs(v);
  return a !== 0 && (a >= 1e6 || a < 1e-3) ? v.toExponential(digits - 1) : Number(v.toPrecision(digits)).toString();
};

/** The human-readable table of a result. */
function table(r: AnalysisResult): string {
  const head = ['stream', 'sps', 'samples', 'start (UTC)', 'E low', 'E high', 'ratio', 'log10', 'STA/LTA peak', 'triggers', 'SNR', 'dominant Hz', 'centroid Hz', 'QC'];
  const rows = r.channels.map((c) => [
    c.id,
    num(c.sampleRate, 6),
    String(c.samples),
    c.startTime,
    num(c.bands.low.energy),
    num(c.bands.high.energy),
    num(c.ratio),
    num(c.log10Ratio),
    `${num(c.staLta.peak)} @ ${num(c.staLta.peakTime, 4)} s`,
    String(c.staLta.triggers.length),
    num(c.snr),
    num(c.dominantFrequency),
    num(c.spectralCentroid),
    c.qc.length === 0 ? 'ok' : c.qc.map((q) => `${q.severity}:${q.code}`).join(' '),
  ]);
  const widths = head.map((h, i) => Math.max(h.length, ...rows.map((row) => (row[i] ?? '').length)));
  const line = (cells: string[]): string => cells.map((c, i) => c.padEnd(widths[i] ?? 0)).join('  ').trimEnd();
  const out = [line(head), line(widths.map((w) => '-'.repeat(w))), ...rows.map(line), ''];
  const units = r.channels[0]?.units === 'm/s' ? '(m/s)²·s' : 'counts²·s';
  out.push(`energies in ${units}; bands ${r.channels.map((c) => `${c.bands.low.fmin}–${c.bands.low.fmax} / ${c.bands.high.fmin}–${c.bands.high.fmax} Hz`)[0]}; filtering ${r.filtering}`);
  out.push(`flag: ${r.flag}   score: ${r.score}   led by ${r.leadChannel} against the ${r.baseline} baseline`);
  for (const reason of r.reasons) out.push(`  - ${reason}`);
  for (const c of r.channels) {
    for (const q of c.qc) out.push(`  qc ${c.id} [${q.severity}] ${q.message}`);
    for (const w of c.warnings) out.push(`  note ${c.id}: ${w}`);
  }
  out.push('Automatic scores need an analyst\'s review; public warnings follow the network\'s own procedures and local authorities.');
  return `${out.join('\n')}\n`;
}

if (process.argv[1] && import.meta.url === pathToFileURL(process.argv[1]).href) {
  const outcome = runAnalyzeCli(process.argv.slice(2));
  process.stdout.write(outcome.stdout);
  process.stderr.write(outcome.stderr);
  process.exitCode = outcome.code;
}
