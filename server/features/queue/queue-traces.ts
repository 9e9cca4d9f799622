import { and, asc, eq } from 'drizzle-orm';
import { processingProfileSchema, type ProcessingProfile } from '@shared/schemas/processing-profile';
import type { TracesQuery, TracesResponse } from '@shared/schemas/queue';
import type { Database } from '@server/db/client';
import { queueItems } from '@server/db/schema/queue-items';
import { channels, stations } from '@server/db/schema/stations';
import { windowChannels } from '@server/db/schema/uploads';
import { decodeStoredSamples } from '@server/db/samples-codec';
import { BandError, highBandForRate, validateBand } from '@server/dsp/bands';
import { butterworthSos } from '@server/dsp/butterworth';
import { channelChain } from '@server/dsp/channel-chain';
import { roundCurveForDisplay, roundToDecimals } from '@server/dsp/display-precision';
import { preprocessTrace } from '@server/dsp/preprocess';
import { sosfilt, sosfiltZeroPhase } from '@server/dsp/sosfilt';
import { spectrogram } from '@server/dsp/spectrum';
import { badRequest, notFound, unprocessable } from '@server/errors';
import { channelSensitivity } from '@server/features/stations/station-registry';
import { groundMotionFromCounts, responseFromSensitivity, woodAndersonFromCounts, type ResponseResult } from '@server/seismo/instrument-response';
import { channelResponseSchema } from '@shared/schemas/station';

/**
 * Display traces of a queue item: for each channel of its window the pre-processed trace, both
 * causal band-pass traces, the STA/LTA curve of the high band and a spectrogram — computed by the
 * engine's own per-channel chain (server/dsp/channel-chain.ts, which `analyzeWindow` runs) with
 * the station's profile and the sensitivity the ingest uses, recomputed from the stored samples so
 * a zoom can return any range at full resolution.
 */

/** A decimated curve: x positions (sample indices) and values. */
export interface Decimated {
  /** Sample index of each point. */
  index: number[];
  values: number[];
}

/**
 * Min/max decimation for display: the samples `y[i0..i1)` are cut into buckets of `bucket`
 * consecutive samples; each bucket gives two points, its minimum and its maximum, in the order
 * they occur (one point when they are the same sample). A peak of any bucket is never lost,
 * unlike taking every k-th sample (common practice for drawing long waveforms on a pixel grid).
 * `bucket` = 1 returns every sample (full resolution).
 * @param y the samples (not mutated)
 * @param i0 first sample index, inclusive; @param i1 last, exclusive (0 ≤ i0 < i1 ≤ y.length)
 * @param bucket samples per bucket, a positive integer
 * @throws RangeError for an empty or out-of-range span or a bucket that is not a positive integer
 */
export function minMaxDecimate(y: Float64Array, i0: number, i1: number, bucket: number): Decimated {
  if (!Number.isInteger(bucket) || bucket < 1) throw new RangeError(`bucket must be a positive whole number of samples, got ${bucket}`);
  if (!(Number.isInteger(i0) && Number.isInteger(i1) && i0 >= 0 && i1 <= y.length && i0 < i1)) {
    throw new RangeError(`sample span [${i0}, ${i1}) is empty or outside 0..${y.length}`);
  }
  const index: number[] = [];
  const values: number[] = [];
  for (let b = i0; b < i1; b += bucket) {
    const e = Math.min(i1, b + bucket);
    let lo = b;
    let hi = b;
    for (let i = b + 1; i < e; i++) {
      if ((y[i] as number) < (y[lo] as number)) lo = i;
      if ((y[i] as number) > (y[hi] as number)) hi = i;
    }
    const first = Math.min(lo, hi);
    const second = Math.max(lo, hi);
    index.push(first);
    values.push(y[first] as number);
    if (second !== first) {
      index.push(second);
      values.push(y[second] as number);
    }
  }
  return { index, values };
}

/**
 * Samples per display bucket so that `n` samples give at most about `points` points (two per
 * bucket): ceil(2n / points), at least 1.
 */
export function bucketFor(n: number, points: number): number {
  return Math.max(1, Math.ceil((2 * n) / points));
}

/**
 * Reads `count` samples from a stored blob of any layout (legacy little-endian float64, or the
 * tagged int32/float64 layouts of samples-codec.ts), copying, so alignment never matters.
 * @throws RangeError when the blob does not hold exactly `count` samples or is not a samples blob
 */
export function decodeSamples(blob: Buffer, count: number): Float64Array {
  return decodeStoredSamples(blob, count);
}

/** Parses a station's stored profile (null or absent: the defaults). */
export function stationProfile(raw: unknown): ProcessingProfile {
  return processingProfileSchema.parse(raw ?? {});
}

/** One stored channel of a window, as the traces are computed from it. */
export interface StoredTraceChannel {
  streamId: string;
  sampleRateHz: number;
  startTimeUs: number;
  sampleCount: number;
  /** The window_channels.samples blob (any layout `decodeStoredSamples` reads). */
  samples: Uint8Array;
}

/**
 * Everything `computeTraces` needs, read from the database: plain data, so it can be sent to a
 * worker thread (the blobs' buffers transferred).
 */
export interface TracesInput {
  channels: StoredTraceChannel[];
  /** The station's stored profile (null: the defaults). */
  profile: unknown;
  /**
   * Per stream id, the flat sensitivity the engine divides by (counts per m/s; from a velocity
   * sensitivity or a poles-and-zeros response, as the ingest chooses: `channelSensitivity`).
   * Absent: the channel is shown in counts.
   */
  sensitivities: Record<string, number>;
  /**
   * Per stream id, the registry's response (one poles-and-zeros filter and the sensitivity, as the
   * event chain reads it) or why it cannot be used: velocity from it, displacement and Wood-Anderson
   * (absent: none is known).
   */
  responses?: Record<string, ResponseResult>;
  query: TracesQuery;
}

/**
 * A queue item's window, station and the station's processing profile, for a viewer whose scope is
 * `scope` (station ids, or 'all').
 * @throws AppError 404 when the item is missing or out of scope (one answer: no leak of existence)
 */
export async function itemWindowInScope(db: Database, itemId: number, scope: 'all' | readonly number[]): Promise<{ windowId: number; stationId: number; profile: unknown }> {
  const [item] = await db
    .select({ windowId: queueItems.windowId, stationId: queueItems.stationId, profile: stations.profile })
    .from(queueItems)
    .innerJoin(stations, eq(stations.id, queueItems.stationId))
    .where(eq(queueItems.id, itemId));
  if (!item || (scope !== 'all' && !scope.includes(item.stationId))) throw notFound(`Queue item ${itemId}`);
  return item;
}

/**
 * Reads what the traces of item `itemId` are computed from, after checking scope and range.
 * @param scope station ids the viewer may see ('all' or assigned ids)
 * @throws AppError 404 when the item is missing or out of scope; 400 when `from` is outside the window
 */
export async function loadTracesInput(db: Database, itemId: number, q: TracesQuery, scope: 'all' | readonly number[]): Promise<TracesInput> {
  return (await planTraces(db, itemId, q, scope)).load();
}

/**
 * What the traces of item `itemId` depend on, read without the samples: `key` names them all (the
 * window and its channels, the station's profile, the sensitivities and responses, the query), so a
 * cache of computed traces under it can never serve an answer the inputs no longer give; `load`
 * then reads the sample blobs (the costly read) and hands back the whole input.
 * @param scope station ids the viewer may see ('all' or assigned ids)
 * @throws AppError 404 when the item is missing or out of scope; 400 when `from` is outside the window
 */
export async function planTraces(db: Database, itemId: number, q: TracesQuery, scope: 'all' | readonly number[]): Promise<{ key: string; load: () => Promise<TracesInput> }> {
  const item = await itemWindowInScope(db, itemId, scope);
  const meta = await db
    .select({ streamId: windowChannels.streamId, sampleRateHz: windowChannels.sampleRateHz, startTimeUs: windowChannels.startTimeUs, sampleCount: windowChannels.sampleCount })
    .from(windowChannels)
    .where(eq(windowChannels.windowId, item.windowId))
    .orderBy(asc(windowChannels.streamId));
  if (meta.length === 0) throw notFound(`Samples of queue item ${itemId}`);
  const registered = await db
    .select({
      location: channels.location,
      code: channels.code,
      sensitivity: channels.sensitivity,
      sensitivityFrequencyHz: channels.sensitivityFrequencyHz,
      sensitivityInputUnits: channels.sensitivityInputUnits,
      response: channels.response,
    })
    .from(channels)
    .where(and(eq(channels.stationId, item.stationId)));
  const durationS = windowDurationS(meta);
  const from = q.from ?? 0;
  if (from < 0 || from >= durationS) throw badRequest(`from: ${from} s is outside the window (0 to ${durationS.toFixed(3)} s)`, { issues: [{ path: 'from', message: 'outside the window' }] });
  const profile = stationProfile(item.profile);
  const sensitivities: Record<string, number> = {};
  const responses: Record<string, ResponseResult> = {};
  for (const r of meta) {
    checkBands(r.streamId, r.sampleRateHz, profile);
    const [, , loc = '', cha = ''] = r.streamId.split('.');
    const ch = registered.find((c) => c.location === loc && c.code === cha);
    const s = ch ? channelSensitivity(ch) : null;
    if (s !== null) sensitivities[r.streamId] = typeof s === 'number' ? s : s.sensitivity;
    responses[r.streamId] = registryResponse(r.streamId, ch);
  }
  const key = JSON.stringify([item.windowId, meta, item.profile ?? null, sensitivities, responses, q]);
  const load = async (): Promise<TracesInput> => {
    const rows = await db
      .select({ streamId: windowChannels.streamId, samples: windowChannels.samples })
      .from(windowChannels)
      .where(eq(windowChannels.windowId, item.windowId))
      .orderBy(asc(windowChannels.streamId));
    const blobs = new Map(rows.map((r) => [r.streamId, r.samples]));
    return {
      channels: meta.map((m) => {
        const samples = blobs.get(m.streamId);
        if (!samples) throw notFound(`Samples of ${m.streamId} in queue item ${itemId}`);
        return { ...m, samples };
      }),
      profile: item.profile,
      sensitivities,
      responses,
      query: q,
    };
  };
  return { key, load };
}

/**
 * A channel's response from the registry (its poles and zeros, sensitivity, frequency and input
 * unit, as the event chain reads them), or the reason it cannot be used, in words.
 */
export function registryResponse(
  streamId: string,
  ch: { sensitivity: number | null; sensitivityFrequencyHz: number | null; sensitivityInputUnits: string | null; response: unknown } | undefined,
): ResponseResult {
  if (!ch) return { ok: false, reason: `${streamId} is not registered at this station, so its response is unknown` };
  const paz = channelResponseSchema.safeParse(ch.response);
  if (!paz.success) return { ok: false, reason: `${streamId}: the registry holds no poles and zeros (${ch.sensitivity === null ? 'no sensitivity either' : 'only a flat sensitivity'}); import the station's StationXML` };
  const units = ch.sensitivityInputUnits ?? null;
  if (units === null || units.trim() === '') return { ok: false, reason: `${streamId}: the registry names no input unit for the response` };
  return responseFromSensitivity(streamId, paz.data, paz.data.sensitivity, paz.data.sensitivityFrequencyHz || (ch.sensitivityFrequencyHz ?? 1), units);
}

/**
 * The engine's band checks for one channel, here on the main thread so a band the station's
 * profile no longer fits (the profile changed after the window was analysed) is a clear 422, not
 * an error in a worker.
 * @throws AppError 422 naming the channel and the band
 */
function checkBands(streamId: string, fs: number, profile: ProcessingProfile): void {
  try {
    validateBand('low', profile.bands.low, fs, profile.bands.nyquistPolicy);
    validateBand('high', highBandForRate(profile.bands.high, fs).band, fs, profile.bands.nyquistPolicy);
  } catch (err) {
    if (err instanceof BandError) throw unprocessable(`${streamId}: ${err.message}; the station's processing profile does not fit this channel`);
    throw err;
  }
}

/** The window's length, s: from its earliest first sample to the end of its longest channel. */
function windowDurationS(rows: ReadonlyArray<{ startTimeUs: number; sampleCount: number; sampleRateHz: number }>): number {
  const t0Us = Math.min(...rows.map((r) => r.startTimeUs));
  return Math.max(...rows.map((r) => (r.startTimeUs - t0Us) / 1e6 + r.sampleCount / r.sampleRateHz));
}

/**
 * The display traces of item `itemId` over [from, to) s from the window's first sample (the whole
 * window by default), each curve decimated to about `points` points with `minMaxDecimate`; a range
 * of at most points/2 samples comes back at full resolution (bucket 1). Computed in this thread;
 * the API computes them in the analysis pool (`computeTraces` there) so a long window never holds
 * the event loop.
 * @param scope station ids the viewer may see ('all' or assigned ids)
 * @throws AppError 404 when the item is missing or out of scope; 400 when the range is outside the window
 */
export async function itemTraces(db: Database, itemId: number, q: TracesQuery, scope: 'all' | readonly number[]): Promise<TracesResponse> {
  return computeTraces(await loadTracesInput(db, itemId, q, scope));
}

/**
 * The display traces from what `loadTracesInput` read: pure computation (decode the stored
 * samples, pre-process, band-pass, STA/LTA, spectrogram, decimate), the same steps and profile as
 * the engine (server/dsp/pipeline.ts). Runs in the analysis worker for the API.
 */
export function computeTraces(input: TracesInput): TracesResponse {
  const { query: q } = input;
  const profile = stationProfile(input.profile);
  const rows = input.channels;
  const sens = input.sensitivities;
  const t0Us = Math.min(...rows.map((r) => r.startTimeUs));
  const durationS = windowDurationS(rows);
  const from = q.from ?? 0;
  const to = q.to ?? durationS;
  const sl = profile.staLta;
  const out: TracesResponse['channels'] = [];
  for (const r of rows) {
    const fs = r.sampleRateHz;
    const x = decodeStoredSamples(r.samples, r.sampleCount);
    const s = sens[r.streamId] ?? null;
    // The engine's chain itself: the traces shown are the ones the flag was computed from.
    const chain = channelChain(x, fs, profile, s ?? 1);
    const { pre, lowY, highY, low, high } = chain;
    const cf = chain.trigger.cf;
    const triggers = chain.trigger.triggers.map((t) => ({ on: t.on, off: t.off }));
    const offsetS = (r.startTimeUs - t0Us) / 1e6;
    const i0 = Math.max(0, Math.floor((from - offsetS) * fs));
    const i1 = Math.min(pre.length, Math.ceil((to - offsetS) * fs));
    if (i1 <= i0) continue;
    const bucket = bucketFor(i1 - i0, q.points);
    const raw = minMaxDecimate(pre, i0, i1, bucket);
    // The band traces and the STA/LTA curve share the raw trace's points (one time axis for the
    // linked plots): each takes its own extremes over the same bucket (bucketExtremes; STA/LTA its
    // maximum, so a trigger peak is never hidden).
    let sg: TracesResponse['channels'][number]['spectrogram'] = null;
    if (pre.length >= 16) {
      const full = spectrogram(pre, fs);
      sg = { times: full.times.map((t) => t + offsetS), freqs: full.freqs, db: full.db };
    }
    out.push({
      streamId: r.streamId,
      sampleRateHz: fs,
      startTime: new Date(Math.floor(r.startTimeUs / 1000)).toISOString(),
      bucket,
      times: raw.index.map((i) => offsetS + i / fs),
      raw: raw.values,
      low: bucketExtremes(lowY, raw.index, i0, i1, bucket),
      high: bucketExtremes(highY, raw.index, i0, i1, bucket),
      staLta: bucketMax(cf, raw.index, i0, i1, bucket),
      units: s !== null ? 'm/s' : 'counts',
      bands: { low: [low.fmin, low.fmax], high: [high.fmin, high.fmax] },
      staLtaLevels: { on: sl.on, off: sl.off, method: sl.method },
      triggers: triggers.map((t) => ({ on: t.on + offsetS, off: t.off === null ? null : t.off + offsetS })),
      spectrogram: sg,
      ...displayFor(input, r.streamId, x, fs, s, profile.bands.order, profile.preprocess.taperAlpha, raw.index, i0, i1, bucket),
    });
  }
  return { from, to: Math.min(to, durationS), filtering: 'causal, zero initial state', channels: out };
}

/**
 * The display traces as the API sends them: only drawn (the review screen's plots), so rounded for
 * display (server/dsp/display-precision.ts) — each curve (pre-processed, both bands, STA/LTA, the
 * analyst's display trace) to 4 significant digits at its own peak, every value within 0.05 % of
 * that peak (below a pixel on any plot), the peak sample itself exact (the screen reads it out);
 * times to the microsecond (the precision of the stored sample times); spectrogram levels to
 * 0.01 dB (a 256-level colour scale over even 3 dB has steps of 0.012 dB). Trigger times, band
 * edges and everything else unchanged. About a third of the JSON of `computeTraces`' full doubles,
 * which the exact checks of the chain (tests/server/features/queue/traces-chain.test.ts) still use.
 */
export function tracesForDisplay(t: TracesResponse): TracesResponse {
  return {
    ...t,
    channels: t.channels.map((c) => ({
      ...c,
      times: roundToDecimals(c.times, 6),
      raw: roundCurveForDisplay(c.raw),
      low: roundCurveForDisplay(c.low),
      high: roundCurveForDisplay(c.high),
      staLta: roundCurveForDisplay(c.staLta),
      spectrogram: c.spectrogram ? { times: roundToDecimals(c.spectrogram.times, 6), freqs: c.spectrogram.freqs, db: roundToDecimals(c.spectrogram.db, 2) } : null,
      ...(c.display ? { display: { ...c.display, values: roundCurveForDisplay(c.display.values) } } : {}),
    })),
  };
}

/**
 * The display trace the analyst asked for on one channel (nothing when neither units nor a band
 * were asked for): the units first — counts (demeaned, detrended, tapered as the engine's
 * pre-processing), velocity (the poles and zeros removed, else the flat sensitivity, said so),
 * displacement (poles and zeros removed), Wood-Anderson (`woodAndersonFromCounts`, the ML's own
 * simulation, mm) — then the band: a Butterworth band-pass of the profile's order, causal from zero
 * state (`sosfilt`, as the engine) or forward-backward (`sosfiltZeroPhase`, display only). A unit or
 * band that cannot be used on this channel is refused with the reason (`displayRefused`).
 */
function displayFor(
  input: TracesInput,
  streamId: string,
  counts: Float64Array,
  fs: number,
  flatSensitivity: number | null,
  order: number,
  taperAlpha: number,
  rawIndex: number[],
  i0: number,
  i1: number,
  bucket: number,
): Pick<TracesResponse['channels'][number], 'display' | 'displayRefused'> {
  const q = input.query;
  if (q.units === undefined && q.fmin === undefined) return {};
  const phase = q.phase ?? 'causal';
  const units = q.units ?? (flatSensitivity !== null ? 'velocity' : 'counts');
  const resp = input.responses?.[streamId] ?? { ok: false as const, reason: `${streamId}: no response` };
  let y: Float64Array;
  let unit: string;
  let how: string;
  if (units === 'counts') {
    y = preprocessTrace(counts, taperAlpha);
    unit = 'counts';
    how = 'counts (demeaned, detrended, tapered)';
  } else if (units === 'velocity' && resp.ok) {
    y = groundMotionFromCounts(counts, fs, resp.response, 'velocity');
    unit = 'm/s';
    how = 'velocity: response removed (poles and zeros, pre-filter 0.05–0.1 Hz and 0.8–0.9 × Nyquist)';
  } else if (units === 'velocity' && flatSensitivity !== null) {
    y = preprocessTrace(counts, taperAlpha).map((v) => v / flatSensitivity);
    unit = 'm/s';
    how = `velocity: ÷ flat sensitivity ${flatSensitivity.toPrecision(4)} counts/(m/s) (no poles and zeros registered)`;
  } else if (!resp.ok) {
    return { display: null, displayRefused: `${units === 'wood-anderson' ? 'Wood-Anderson' : units} needs the instrument response: ${resp.reason}` };
  } else if (units === 'displacement') {
    y = groundMotionFromCounts(counts, fs, resp.response, 'displacement');
    unit = 'm';
    how = 'displacement: response removed (poles and zeros, pre-filter 0.05–0.1 Hz and 0.8–0.9 × Nyquist)';
  } else {
    y = woodAndersonFromCounts(counts, fs, resp.response);
    unit = 'mm';
    how = 'Wood-Anderson (T0 0.8 s, h 0.7, gain 2080) from the response, mm';
  }
  let band: [number, number] | null = null;
  if (q.fmin !== undefined && q.fmax !== undefined) {
    try {
      const b = validateBand('display', { fmin: q.fmin, fmax: q.fmax }, fs, 'refuse');
      band = [b.fmin, b.fmax];
    } catch (err) {
      if (err instanceof BandError) return { display: null, displayRefused: `${streamId}: ${err.message}` };
      throw err;
    }
    const sos = butterworthSos(order, band, 'bandpass', fs);
    y = phase === 'zero-phase' ? sosfiltZeroPhase(sos, y) : sosfilt(sos, y);
    how += ` · Butterworth band-pass ${band[0]}–${band[1]} Hz, order ${order}, ${phase === 'zero-phase' ? 'zero-phase (forward-backward, display only)' : 'causal, zero initial state'}`;
  } else how += ' · no band-pass';
  return { display: { values: bucketExtremes(y, rawIndex, i0, i1, bucket), unit, units, chain: how, band, phase }, displayRefused: null };
}

/**
 * A band trace on the raw trace's points: for a bucket with two raw points, the band's minimum and
 * maximum over that bucket in their own time order; for a one-point bucket, its value of largest
 * magnitude; at full resolution, the sample itself.
 */
function bucketExtremes(y: Float64Array, rawIndex: number[], i0: number, i1: number, bucket: number): number[] {
  if (bucket === 1) return rawIndex.map((i) => y[i] as number);
  const out: number[] = [];
  let k = 0;
  while (k < rawIndex.length) {
    const b = i0 + Math.floor(((rawIndex[k] as number) - i0) / bucket) * bucket;
    const e = Math.min(i1, b + bucket);
    const twoPoints = k + 1 < rawIndex.length && (rawIndex[k + 1] as number) < e;
    let lo = b;
    let hi = b;
    for (let i = b + 1; i < e; i++) {
      if ((y[i] as number) < (y[lo] as number)) lo = i;
      if ((y[i] as number) > (y[hi] as number)) hi = i;
    }
    if (twoPoints) {
      out.push(lo < hi ? (y[lo] as number) : (y[hi] as number), lo < hi ? (y[hi] as number) : (y[lo] as number));
      k += 2;
    } else {
      out.push(Math.abs(y[lo] as number) > Math.abs(y[hi] as number) ? (y[lo] as number) : (y[hi] as number));
      k += 1;
    }
  }
  return out;
}

/** The curve's maximum over the bucket of each raw point (the sample itself at full resolution). */
function bucketMax(y: Float64Array, rawIndex: number[], i0: number, i1: number, bucket: number): number[] {
  return rawIndex.map((idx) => {
    if (bucket === 1) return y[idx] as number;
    const b = i0 + Math.floor((idx - i0) / bucket) * bucket;
    let m = y[b] as number;
    for (let i = b + 1; i < Math.min(i1, b + bucket); i++) if ((y[i] as number) > m) m = y[i] as number;
    return m;
  });
}
