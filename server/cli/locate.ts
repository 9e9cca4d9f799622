import { readFileSync } from 'node:fs';
import { basename } from 'node:path';
import { pathToFileURL } from 'node:url';
import { z } from 'zod';
import { decodeWaveform } from '@server/formats/decode';
import { parseIsoTimeUs } from '@server/formats/iso-time';
import { parseStationXml, type StationXmlDocument } from '@server/formats/stationxml';
import { type DecodedStream } from '@server/formats/types';
import { solveEvent, type ChainPick, type ChainStation, type ChainStream } from '@server/seismo/event-chain';
import { responseFromStages, type ResponseResult } from '@server/seismo/instrument-response';
import { solutionReport, type SolutionReport } from '@server/seismo/solution-report';
import { DEFAULT_VELOCITY_MODEL, validateVelocityModel, type VelocityModel } from '@server/seismo/velocity-model';
import { defaultProcessingProfile } from '@shared/schemas/processing-profile';
import { streamIdSchema } from '@shared/schemas/label';
import { decodeMessage, message, parseCli, readJsonFile, readWaveformFile } from './cli-files';

/**
 * `npm run -s locate -- --stationxml STATIONS.xml [--model MODEL.json] [--picks PICKS.json] FILE... [--json]`
 *
 * Locates an event from waveform windows of several stations and gives its local magnitude, without a
 * server, with the same code the server runs (server/seismo/event-chain.ts):
 * - FILE…: MiniSEED 2/3 or CSV windows (a CSV names its stream in a `# stream=` line);
 * - STATIONS.xml: FDSN StationXML: station coordinates, and each channel's response for ML;
 * - MODEL.json: `{"name", "layers": [{"topKm", "vpKmS", "vsKmS"}, …]}` (default: Seisift's placeholder crust);
 * - PICKS.json: `[{"streamId", "phase": "P"|"S", "time": ISO, "uncertaintyS"}, …]`, which replace the
 *   automatic picks (suggestions made from the traces when no file is given).
 * Exit codes: 0 located; 1 usage, StationXML, model or picks error; 2 a FILE cannot be read or decoded;
 * 3 the event cannot be located (the reason on stderr).
 */

/** The outcome of a run (for tests: no process exit inside). */
export interface LocateCliOutcome {
  code: 0 | 1 | 2 | 3;
  stdout: string;
  stderr: string;
}

const HELP = 'usage: npm run -s locate -- --stationxml STATIONS.xml [--model MODEL.json] [--picks PICKS.json] FILE... [--json]';

/** MODEL.json. */
export const modelFileSchema = z.object({
  name: z.string().min(1).max(200),
  layers: z.array(z.object({ topKm: z.number(), vpKmS: z.number(), vsKmS: z.number() }).strict()).min(1).max(50),
});

/** PICKS.json. */
export const picksFileSchema = z
  .array(
    z
      .object({
        streamId: streamIdSchema,
        phase: z.enum(['P', 'S']),
        time: z.string().refine((t) => parseIsoTimeUs(t) !== undefined, { message: 'must be an ISO 8601 time' }),
        uncertaintyS: z.number().positive().max(60),
        onset: z.enum(['impulsive', 'emergent', 'questionable']).optional(),
        polarity: z.enum(['positive', 'negative', 'undecidable']).optional(),
      })
      .strict(),
  )
  .max(10_000);

class UsageError extends Error {}

function readJson(path: string, what: string): unknown {
  try {
    return readJsonFile(path, what);
  } catch (err) {
    throw new UsageError(message(err));
  }
}

function firstIssue(err: z.ZodError): string {
  const i = err.issues[0];
  return i ? `${i.path.join('.') || '(top level)'}: ${i.message}` : 'invalid';
}

/** Loads MODEL.json and checks it (velocity-model.ts rules). */
function loadModel(path: string): VelocityModel {
  const parsed = modelFileSchema.safeParse(readJson(path, 'the model'));
  if (!parsed.success) throw new UsageError(`model ${path}: ${firstIssue(parsed.error)}`);
  try {
    return validateVelocityModel(parsed.data);
  } catch (err) {
    throw new UsageError(`model ${path}: ${message(err)}`);
  }
}

function loadPicks(path: string): ChainPick[] {
  const parsed = picksFileSchema.safeParse(readJson(path, 'the picks'));
  if (!parsed.success) throw new UsageError(`picks ${path}: ${firstIssue(parsed.error)}`);
  return parsed.data.map((p) => ({
    streamId: p.streamId,
    phase: p.phase,
    timeUs: parseIsoTimeUs(p.time) as number,
    uncertaintyS: p.uncertaintyS,
    onset: p.onset ?? null,
    polarity: p.polarity ?? null,
    evaluationMode: 'manual',
  }));
}

const covers = (e: { startTimeUs?: number | undefined; endTimeUs?: number | undefined }, us: number): boolean =>
  (e.startTimeUs === undefined || e.startTimeUs <= us) && (e.endTimeUs === undefined || us < e.endTimeUs);

/**
 * Station coordinates and channel responses from StationXML for the streams: the station and channel
 * epochs that cover each stream's first sample (the first epoch when none covers it, with a note).
 */
export function metadataFor(doc: StationXmlDocument, streams: readonly DecodedStream[]): { stations: ChainStation[]; responses: Map<string, ResponseResult>; notes: string[] } {
  const stations: ChainStation[] = [];
  const responses = new Map<string, ResponseResult>();
  const notes: string[] = [];
  for (const s of streams) {
    const net = doc.networks.find((n) => n.code === s.network);
    const epochs = net?.stations.filter((st) => st.code === s.station) ?? [];
    const st = epochs.find((e) => covers(e, s.startTimeUs)) ?? epochs[0];
    if (!st) {
      responses.set(s.id, { ok: false, reason: `${s.network}.${s.station} is not in the StationXML` });
      continue;
    }
    if (!stations.some((x) => x.network === s.network && x.code === s.station)) {
      stations.push({ network: s.network, code: s.station, latitudeDeg: st.latitude, longitudeDeg: st.longitude });
    }
    const chans = st.channels.filter((c) => c.code === s.channel && c.locationCode === s.location);
    const ch = chans.find((c) => covers(c, s.startTimeUs));
    if (!ch) {
      responses.set(s.id, { ok: false, reason: `${s.id}: no channel epoch of the StationXML covers ${new Date(s.startTimeUs / 1000).toISOString()}` });
      continue;
    }
    responses.set(s.id, responseFromStages(ch));
  }
  const missing = [...new Set(streams.filter((s) => !stations.some((x) => x.network === s.network && x.code === s.station)).map((s) => `${s.network}.${s.station}`))];
  if (missing.length > 0) notes.push(`not in the StationXML, left out: ${missing.join(', ')}`);
  return { stations, responses, notes };
}

/** A short text report (without --json). */
function text(rep: SolutionReport): string {
  const o = rep.origin;
  const lines = [
    `origin ${o.time}  ${o.latitude.toFixed(4)}°, ${o.longitude.toFixed(4)}°  depth ${o.depthKm.toFixed(1)} km${o.depthFixed ? ' (fixed)' : ` ± ${o.uncertainty.depthKm ?? '—'} km`}`,
    `68 % ellipse ${o.uncertainty.ellipse.semiMajorKm} × ${o.uncertainty.ellipse.semiMinorKm} km, azimuth ${o.uncertainty.ellipse.azimuthDeg}°; time ± ${o.uncertainty.timeS} s; RMS ${o.rmsS} s; gap ${o.azimuthalGapDeg}°; nearest ${o.minimumDistanceKm} km; ${o.usedPhases} phases, ${o.usedStations} stations`,
    rep.magnitude ? `ML ${rep.magnitude.value.toFixed(1)}${rep.magnitude.uncertainty === null ? '' : ` ± ${rep.magnitude.uncertainty.toFixed(1)}`} from ${rep.magnitude.stationCount} station${rep.magnitude.stationCount === 1 ? '' : 's'}` : 'ML: none',
    'arrivals:',
    ...rep.arrivals.map((a) => `  ${a.streamId.padEnd(18)} ${a.phase} ${a.modelPhase.padEnd(5)} ${a.time}  residual ${a.residualS.toFixed(3).padStart(7)} s  ${a.distanceKm.toFixed(1).padStart(6)} km  az ${a.azimuthDeg.toFixed(0).padStart(3)}°  weight ${a.weight.toFixed(2)}`),
    'station magnitudes:',
    ...rep.stationMagnitudes.map((m) => `  ${m.streamId.padEnd(18)} ML ${m.value.toFixed(2)}  A ${m.amplitudeMm} mm  ${m.hypocentralDistanceKm.toFixed(1)} km`),
    ...rep.notes.map((n) => `note: ${n}`),
  ];
  return `${lines.join('\n')}\n`;
}

/** Runs the command on its arguments (without `node script`); never exits the process. */
export function runLocateCli(argv: string[]): LocateCliOutcome {
  const parsed = parseCli(argv, { stationxml: { type: 'string' }, model: { type: 'string' }, picks: { type: 'string' }, json: { type: 'boolean', default: false } }, HELP);
  if (!parsed.args) return parsed.outcome;
  const args = parsed.args;
  if (!args.values.stationxml) return { code: 1, stdout: '', stderr: `--stationxml is required (station coordinates and responses)\n${HELP}\n` };
  if (args.positionals.length === 0) return { code: 1, stdout: '', stderr: `give at least one FILE\n${HELP}\n` };
  let doc: StationXmlDocument;
  let model: VelocityModel;
  let picks: ChainPick[] | null;
  try {
    let xml: string;
    try {
      xml = readFileSync(args.values.stationxml, 'utf8');
    } catch (err) {
      throw new UsageError(`cannot read the StationXML ${args.values.stationxml}: ${message(err)}`);
    }
    try {
      doc = parseStationXml(xml);
    } catch (err) {
      throw new UsageError(`StationXML ${args.values.stationxml}: ${message(err)}`);
    }
    model = args.values.model ? loadModel(args.values.model) : DEFAULT_VELOCITY_MODEL;
    picks = args.values.picks ? loadPicks(args.values.picks) : null;
  } catch (err) {
    return { code: 1, stdout: '', stderr: `${message(err)}\n` };
  }
  const streams: DecodedStream[] = [];
  for (const file of args.positionals) {
    const read = readWaveformFile(file);
    if ('outcome' in read) return read.outcome;
    try {
      streams.push(...decodeWaveform(read.bytes, { filename: basename(file) }));
    } catch (err) {
      return { code: 2, stdout: '', stderr: `cannot decode ${file}: ${decodeMessage(err, file)}\n` };
    }
  }
  const meta = metadataFor(doc, streams);
  const known = new Set(meta.stations.map((s) => `${s.network}.${s.code}`));
  const usable: ChainStream[] = streams.filter((s) => known.has(`${s.network}.${s.station}`));
  if (picks) {
    const unknown = picks.find((p) => !known.has(p.streamId.split('.').slice(0, 2).join('.')) && !doc.networks.some((n) => n.stations.some((st) => `${n.code}.${st.code}` === p.streamId.split('.').slice(0, 2).join('.'))));
    if (unknown) return { code: 1, stdout: '', stderr: `picks: ${unknown.streamId}: its station is not in the StationXML\n` };
    // Stations picked but without a waveform file still locate: take their coordinates from the StationXML.
    for (const p of picks) {
      const [net, sta] = p.streamId.split('.');
      if (known.has(`${net}.${sta}`)) continue;
      const st = doc.networks.find((n) => n.code === net)?.stations.find((x) => x.code === sta);
      if (st) {
        meta.stations.push({ network: net as string, code: sta as string, latitudeDeg: st.latitude, longitudeDeg: st.longitude });
        known.add(`${net}.${sta}`);
      }
    }
  }
  let solution;
  try {
    solution = solveEvent(usable, meta.stations, picks, { velocityModel: model, responses: meta.responses, profile: defaultProcessingProfile });
  } catch (err) {
    return { code: 3, stdout: '', stderr: `cannot locate: ${message(err)}\n` };
  }
  solution.notes.unshift(...meta.notes);
  const report = solutionReport(solution);
  if (!report) {
    const found = solution.pickSource === 'automatic' ? ` (${solution.picks.length} automatic picks: ${solution.picks.map((p) => `${p.streamId} ${p.phase}`).join(', ') || 'none'})` : '';
    return { code: 3, stdout: '', stderr: `cannot locate: ${solution.refusal?.reason ?? 'no origin'}${found}\n` };
  }
  return { code: 0, stdout: args.values.json ? `${JSON.stringify(report)}\n` : text(report), stderr: '' };
}

if (process.argv[1] && import.meta.url === pathToFileURL(process.argv[1]).href) {
  const outcome = runLocateCli(process.argv.slice(2));
  process.stdout.write(outcome.stdout);
  process.stderr.write(outcome.stderr);
  process.exitCode = outcome.code;
}
