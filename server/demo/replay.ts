/**
 * `npm run demo:replay`: sends the demo day's windows (not the stations' noise history) to a running
 * Seisift through POST /api/uploads, each with its station's ingest token, at a steady pace, with
 * the start times moved to "now" so the live queue moves while someone watches. Every window is
 * re-encoded with our MiniSEED writer (or CSV writer) at its new start time, so its SHA-256 differs
 * from the stored demo files and from earlier replays: nothing is a duplicate. Windows that share a start time in the demo (one event
 * seen by several stations) keep sharing one, so they still group as one candidate event.
 *
 * Tokens (see `--help`): `--token NET.STA=SECRET` (repeatable) or SEISIFT_INGEST_TOKEN with the same
 * `KV03=ssi_…,KV04=ssi_…` list (a bare `ssi_…` needs `--station KV03`); only those stations' windows
 * are sent. Without tokens the script signs in (`--email`/`--password`, default the demo admin and
 * SEISIFT_DEMO_PASSWORD) and creates one token per demo station labelled "demo replay".
 */
import { readFileSync } from 'node:fs';
import { join, resolve } from 'node:path';
import { pathToFileURL } from 'node:url';
import { z } from 'zod';
import { tokenCreatedSchema } from '@shared/schemas/station';
import { uploadResponseSchema, type UploadOutcome } from '@shared/schemas/upload';
import { decodeWaveform } from '@server/formats/decode';
import { encodeDemoCsv, encodeDemoMiniSeed, type CountsPiece } from './encode';
import { DEMO_WAVEFORMS_DIR } from './generate-waveforms';
import { readDemoManifest } from './ingest-demo';

/** Label of the tokens the replay creates for itself. */
export const REPLAY_TOKEN_LABEL = 'demo replay';
/** Most passes `--loop` allows. */
export const MAX_LOOPS = 100;

/**
 * Re-encodes a demo window with every stream moved by the same amount so that the earliest stream
 * starts at `newStartUs`; gaps stay gaps. MiniSEED comes back as Steim-2 MiniSEED 2 (512-byte
 * records), CSV as CSV. The file name gets the new start time.
 * @throws WaveformParseError when the bytes do not decode; RangeError when the samples are not
 *   integer counts or the new start is not an integer number of µs
 */
export function shiftWindowFile(bytes: Uint8Array, filename: string, newStartUs: number): { bytes: Uint8Array; filename: string } {
  if (!Number.isInteger(newStartUs)) throw new RangeError(`new start ${newStartUs} µs is not an integer`);
  const streams = decodeWaveform(bytes, { filename });
  const first = Math.min(...streams.map((s) => s.startTimeUs));
  const delta = newStartUs - first;
  const stamp = new Date(newStartUs / 1000).toISOString().slice(0, 19).replace(/:/gu, '-');
  const ints = (x: Float64Array, from: number, to: number): Int32Array => {
    const out = new Int32Array(to - from);
    for (let i = from; i < to; i++) {
      const v = x[i] ?? 0;
      if (!Number.isInteger(v)) throw new RangeError(`${filename}: sample ${i} = ${v} is not an integer count`);
      out[i - from] = v;
    }
    return out;
  };
  if (streams[0]?.format === 'csv') {
    const s = streams[0];
    const text = encodeDemoCsv(s.id, s.startTimeUs + delta, s.sampleRateHz, ints(s.samples, 0, s.samples.length), 'Kestrel Valley demo replay (invented data)');
    return { bytes: new TextEncoder().encode(text), filename: filename.replace(/\d{4}-\d{2}-\d{2}T\d{2}-\d{2}-\d{2}/u, stamp) };
  }
  const pieces: CountsPiece[] = [];
  for (const s of streams) {
    const base = { network: s.network, station: s.station, location: s.location, channel: s.channel, sampleRateHz: s.sampleRateHz };
    const cuts = [{ index: 0, startUs: s.startTimeUs }, ...s.discontinuities.map((d) => ({ index: d.sampleIndex, startUs: d.actualTimeUs }))];
    cuts.forEach((c, k) => {
      const end = cuts[k + 1]?.index ?? s.samples.length;
      pieces.push({ ...base, startTimeUs: c.startUs + delta, samples: ints(s.samples, c.index, end) });
    });
  }
  return { bytes: encodeDemoMiniSeed(pieces), filename: filename.replace(/\d{4}-\d{2}-\d{2}T\d{2}-\d{2}-\d{2}/u, stamp) };
}

/** Options of {@link replayDemo}. */
export interface ReplayOptions {
  /** Base URL of the server, e.g. http://127.0.0.1:3000. */
  url: string;
  /** Windows per second (> 0). */
  rate: number;
  /** Ingest token secret per station code (KV01…); when absent, `credentials` are used to make them. */
  tokens?: Map<string, string>;
  credentials?: { email: string; password: string };
  /** Passes over the demo files (1 … MAX_LOOPS). */
  loops: number;
  /** Send at most this many files (all when absent). */
  limit?: number;
  /** The demo-waveforms folder. */
  dir?: string;
  /** The clock, ms since epoch (tests pass their own). */
  now?: () => number;
  /** Waits `ms` (tests pass a fast one). */
  sleep?: (ms: number) => Promise<void>;
  /** One line per file. */
  log?: (line: string) => void;
  /** Stops early when it returns true (Ctrl-C). */
  stopped?: () => boolean;
}

/** What a replay did. */
export interface ReplayReport {
  sent: number;
  created: number;
  refused: { filename: string; message: string }[];
  /** Queue item ids created. */
  itemIds: number[];
}

/** A failure talking to the server: names the request and what came back. */
export class ReplayError extends Error {
  override readonly name = 'ReplayError';
}

const errorBodySchema = z.object({ error: z.object({ code: z.string(), message: z.string() }) });

async function describeFailure(what: string, res: Response): Promise<ReplayError> {
  const text = await res.text();
  let detail = text.slice(0, 300);
  try {
    const parsed = errorBodySchema.safeParse(JSON.parse(text));
    if (parsed.success) detail = `${parsed.data.error.code}: ${parsed.data.error.message}`;
  } catch {
    // not JSON: keep the text
  }
  return new ReplayError(`${what}: HTTP ${res.status} ${detail}`);
}

/** Signs in and creates one ingest token (`demo replay`) per demo station the person may manage. */
async function makeTokens(url: string, credentials: { email: string; password: string }, stationCodes: readonly string[]): Promise<Map<string, string>> {
  const origin = new URL(url).origin;
  const signIn = await fetch(`${url}/api/auth/sign-in`, {
    method: 'POST',
    headers: { 'content-type': 'application/json', origin },
    body: JSON.stringify(credentials),
  });
  if (!signIn.ok) throw await describeFailure(`signing in as ${credentials.email}`, signIn);
  const cookie = signIn.headers
    .getSetCookie()
    .map((c) => c.split(';')[0] ?? '')
    .filter((c) => c !== '')
    .join('; ');
  const list = await fetch(`${url}/api/stations`, { headers: { cookie } });
  if (!list.ok) throw await describeFailure('listing stations', list);
  const body = z.object({ stations: z.array(z.object({ id: z.number(), network: z.string(), code: z.string() })) }).parse(await list.json());
  const tokens = new Map<string, string>();
  for (const code of stationCodes) {
    // Stations this person cannot see or manage (an operator's unassigned ones) are left out.
    const st = body.stations.find((s) => s.network === 'XX' && s.code === code);
    if (!st) continue;
    const res = await fetch(`${url}/api/stations/${st.id}/tokens`, {
      method: 'POST',
      headers: { 'content-type': 'application/json', origin, cookie },
      body: JSON.stringify({ label: REPLAY_TOKEN_LABEL }),
    });
    if (res.status === 403) continue;
    if (!res.ok) throw await describeFailure(`creating an ingest token for XX.${code} as ${credentials.email}`, res);
    tokens.set(code, tokenCreatedSchema.parse(await res.json()).secret);
  }
  await fetch(`${url}/api/auth/sign-out`, { method: 'POST', headers: { origin, cookie } }).catch(() => undefined);
  return tokens;
}

/**
 * Replays the demo windows (see the module comment) and returns what happened. Files of stations
 * without a token are skipped. Each file's window ends "now" (to 10 ms) at the moment it is
 * sent; windows sharing a demo start share the new one, and each new start is at least 1 s after
 * the previous, so no two sent files are identical.
 * @throws ReplayError when the server cannot be reached, the sign-in or token creation fails, or a
 *   token is refused (401); RangeError for a rate ≤ 0 or loops outside 1 … MAX_LOOPS
 */
export async function replayDemo(opts: ReplayOptions): Promise<ReplayReport> {
  if (!(opts.rate > 0) || !Number.isFinite(opts.rate)) throw new RangeError(`--rate must be a positive number of windows per second, got ${opts.rate}`);
  if (!Number.isInteger(opts.loops) || opts.loops < 1 || opts.loops > MAX_LOOPS) throw new RangeError(`--loop must be a whole number from 1 to ${MAX_LOOPS}, got ${opts.loops}`);
  const now = opts.now ?? Date.now;
  const sleep = opts.sleep ?? ((ms: number) => new Promise<void>((r) => setTimeout(r, ms)));
  const log = opts.log ?? (() => {});
  const dir = opts.dir ?? DEMO_WAVEFORMS_DIR;
  const manifest = readDemoManifest(dir);
  const codes = [...new Set(manifest.files.map((f) => f.station))].sort();
  const tokens = opts.tokens ?? (opts.credentials ? await makeTokens(opts.url, opts.credentials, codes) : new Map<string, string>());
  // The stations' noise history is what the seed dismisses; a replay sends the demo day.
  const files = manifest.files.filter((f) => f.reason !== 'history' && tokens.has(f.station));
  if (files.length === 0) {
    throw new ReplayError(
      opts.tokens
        ? `no token for any demo station (${codes.join(', ')}): give --token KV03=SECRET`
        : `${opts.credentials?.email ?? 'nobody'} may not make ingest tokens for any demo station (${codes.join(', ')}) on ${opts.url}`,
    );
  }

  const report: ReplayReport = { sent: 0, created: 0, refused: [], itemIds: [] };
  const t0 = now();
  let k = 0;
  let lastGroupStartUs = -Infinity;
  for (let pass = 0; pass < opts.loops; pass++) {
    const shifts = new Map<string, number>();
    for (const f of files) {
      if (opts.limit !== undefined && report.sent >= opts.limit) return report;
      if (opts.stopped?.()) return report;
      const due = t0 + (k * 1000) / opts.rate;
      const wait = due - now();
      if (wait > 0) await sleep(wait);
      k++;
      let newStartUs = shifts.get(f.start);
      if (newStartUs === undefined) {
        // The window ends now (on the 10 ms sample grid of the demo's 100 sps), so it is the newest
        // thing the station has sent; each new group starts at least 1 s after the previous one, so
        // that at rates above one window per second (or on the next pass) no re-encoded file
        // repeats an earlier one byte for byte.
        newStartUs = Math.max(Math.floor(now() / 10) * 10_000 - 120e6, lastGroupStartUs + 1e6);
        lastGroupStartUs = newStartUs;
        shifts.set(f.start, newStartUs);
      }
      const original = readFileSync(join(dir, f.file));
      const name = f.file.slice(f.file.lastIndexOf('/') + 1);
      const shifted = shiftWindowFile(original, name, newStartUs);
      const form = new FormData();
      form.append('files', new Blob([new Uint8Array(shifted.bytes)], { type: name.endsWith('.csv') ? 'text/csv' : 'application/octet-stream' }), shifted.filename);
      let res: Response;
      try {
        res = await fetch(`${opts.url}/api/uploads`, { method: 'POST', headers: { authorization: `Bearer ${tokens.get(f.station) ?? ''}` }, body: form });
      } catch (err) {
        throw new ReplayError(`cannot reach ${opts.url} (${err instanceof Error ? err.message : String(err)}): is the server running (npm start)?`);
      }
      report.sent++;
      if (res.status === 401) throw await describeFailure(`uploading ${shifted.filename} with the XX.${f.station} token`, res);
      const parsed = uploadResponseSchema.safeParse(await res.json().catch(() => null));
      const outcome: UploadOutcome | undefined = parsed.success ? parsed.data.files[0] : undefined;
      if (!outcome) {
        report.refused.push({ filename: shifted.filename, message: `HTTP ${res.status} without a per-file outcome` });
        log(`${shifted.filename}: HTTP ${res.status}`);
        continue;
      }
      if (outcome.status === 'created') {
        report.created++;
        for (const it of outcome.items ?? []) {
          report.itemIds.push(it.id);
          log(`${shifted.filename}: item ${it.id} ${it.flag} (score ${it.score.toFixed(1)})`);
        }
      } else {
        report.refused.push({ filename: shifted.filename, message: outcome.message ?? outcome.status });
        log(`${shifted.filename}: ${outcome.status}${outcome.message ? ` — ${outcome.message}` : ''}`);
      }
    }
  }
  return report;
}

const HELP = `usage: npm run demo:replay -- [options]

Sends the demo windows (demo-waveforms/) to a running Seisift through POST /api/uploads at a steady
pace, re-encoded with start times at "now".

  --url URL          server base URL (default http://127.0.0.1:3000, or SEISIFT_URL)
  --rate N           windows per second (default 1)
  --loop N           passes over the files (default 1, at most ${MAX_LOOPS})
  --limit N          send at most N files
  --token STA=SECRET ingest token of one station (repeatable), e.g. --token KV03=ssi_...
                     or SEISIFT_INGEST_TOKEN="KV03=ssi_...,KV04=ssi_..."; a bare token needs --station
  --station STA      the station of a bare --token / SEISIFT_INGEST_TOKEN
  --email E          without tokens: sign in as E (an admin, or an operator of the stations) and
  --password P       create one "demo replay" token per demo station
                     (default: admin@kestrel.example and SEISIFT_DEMO_PASSWORD or kestrel-demo-pass)
  --dir DIR          the demo-waveforms folder`;

/** Parses the command line (and the environment) into replay options. @throws Error naming the bad argument */
export function parseReplayArgs(argv: readonly string[], env: NodeJS.ProcessEnv): ReplayOptions | 'help' {
  let url = env.SEISIFT_URL ?? 'http://127.0.0.1:3000';
  let rate = 1;
  let loops = 1;
  let limit: number | undefined;
  let station: string | undefined;
  let email: string | undefined;
  let password: string | undefined;
  let dir: string | undefined;
  const tokenArgs: string[] = [];
  const num = (flag: string, v: string | undefined): number => {
    const n = Number(v);
    if (v === undefined || v.trim() === '' || !Number.isFinite(n)) throw new Error(`${flag} needs a number, got '${v ?? ''}'`);
    return n;
  };
  for (let i = 0; i < argv.length; i++) {
    const a = argv[i];
    const v = (): string => {
      const x = argv[++i];
      if (x === undefined) throw new Error(`${a} needs a value`);
      return x;
    };
    if (a === '--help' || a === '-h') return 'help';
    else if (a === '--url') url = v();
    else if (a === '--rate') rate = num(a, v());
    else if (a === '--loop') loops = num(a, v());
    else if (a === '--limit') limit = num(a, v());
    else if (a === '--token') tokenArgs.push(v());
    else if (a === '--station') station = v();
    else if (a === '--email') email = v();
    else if (a === '--password') password = v();
    else if (a === '--dir') dir = resolve(v());
    else throw new Error(`unknown argument '${a}' (try --help)`);
  }
  url = url.replace(/\/+$/u, '');
  if (!URL.canParse(url) || !/^https?:$/u.test(new URL(url).protocol)) throw new Error(`--url '${url}' is not an http(s) URL`);
  if (tokenArgs.length === 0 && env.SEISIFT_INGEST_TOKEN) tokenArgs.push(...env.SEISIFT_INGEST_TOKEN.split(','));
  let tokens: Map<string, string> | undefined;
  if (tokenArgs.length > 0) {
    tokens = new Map();
    for (const t of tokenArgs.map((x) => x.trim()).filter((x) => x !== '')) {
      const m = /^(?:XX\.)?(KV0[1-6])=(.+)$/u.exec(t);
      if (m?.[1] && m[2]) tokens.set(m[1], m[2]);
      else if (!t.includes('=') && station) tokens.set(station.replace(/^XX\./u, ''), t);
      else throw new Error(`token '${t.slice(0, 8)}…' needs its station: write KV03=SECRET or add --station KV03`);
    }
  }
  return {
    url,
    rate,
    loops,
    ...(limit === undefined ? {} : { limit }),
    ...(dir === undefined ? {} : { dir }),
    ...(tokens ? { tokens } : { credentials: { email: email ?? 'admin@kestrel.example', password: password ?? env.SEISIFT_DEMO_PASSWORD ?? 'kestrel-demo-pass' } }),
  };
}

async function main(): Promise<void> {
  const parsed = parseReplayArgs(process.argv.slice(2), process.env);
  if (parsed === 'help') {
    console.log(HELP);
    return;
  }
  let stop = false;
  process.on('SIGINT', () => {
    stop = true;
  });
  const report = await replayDemo({ ...parsed, log: (line) => console.log(line), stopped: () => stop });
  console.log(`demo:replay: sent ${report.sent}, created ${report.created}, ${report.itemIds.length} queue items${report.refused.length ? `, ${report.refused.length} refused` : ''}`);
  if (report.refused.length > 0) process.exitCode = 1;
}

if (process.argv[1] && import.meta.url === pathToFileURL(resolve(process.argv[1])).href) {
  main().catch((err: unknown) => {
    console.error(`demo:replay: ${err instanceof Error ? err.message : String(err)}`);
    process.exit(1);
  });
}
