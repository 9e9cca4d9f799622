/**
 * The event chain shared by `npm run locate` and the server: picks (the analysts' when given, else
 * automatic suggestions), location, Wood-Anderson amplitudes from the instrument response, station
 * and network ML. Pure: streams, stations, responses and the model come in; a solution comes out.
 *
 * Times: µs since the epoch for picks and samples (the decoded streams' scale); the location works in
 * seconds on the same epoch. Distances km, amplitudes mm (Wood-Anderson, zero-to-peak).
 * Every location and magnitude is a triage aid: it carries its uncertainty and notes, and publication
 * follows the network's own procedures and local authorities.
 */
import { greatCircleDistanceKm } from './geodesy';
import { automaticPicks, type PickerChannel, type PickOnset, type PickPolarity } from './auto-picks';
import { woodAndersonFromCounts, type InstrumentResponse, type ResponseResult } from './instrument-response';
import { locateEvent, MIN_PHASES, MIN_STATIONS, type LocatedArrival, type LocatedOrigin, type LocateOptions, type LocatePick } from './locate';
import { distanceNote, networkMagnitude, stationMagnitude, type MinusLogA0, type NetworkMagnitude } from './magnitude';
import { firstArrivalTimeS, prepareVelocityModel } from './travel-time';
import type { VelocityModel } from './velocity-model';
import { peakAmplitude } from './wood-anderson';
import { median } from '@shared/math/median';
import type { ProcessingProfile } from '@shared/schemas/processing-profile';

/** The caution every location and magnitude carries (BRIEF: triage aid). */
export const LOCATION_CAUTION =
  'Automatic and reviewed locations and magnitudes are triage aids with the uncertainties shown: they need an analyst\'s review, and public information and warnings follow the network\'s own procedures and local authorities.';

/** A station's position. */
export interface ChainStation {
  network: string;
  code: string;
  latitudeDeg: number;
  longitudeDeg: number;
}

/** A pick given to the chain (an analyst's or an automatic one). */
export interface ChainPick {
  streamId: string;
  phase: 'P' | 'S';
  /** µs since the epoch. */
  timeUs: number;
  /** 1-σ, s; > 0. */
  uncertaintyS: number;
  onset?: PickOnset | null;
  polarity?: PickPolarity | null;
  evaluationMode: 'manual' | 'automatic';
  /** How an automatic pick was made, in words. */
  method?: string;
}

/** An amplitude read, or re-picked by an analyst, on a horizontal channel. */
export interface ChainAmplitude {
  streamId: string;
  /** Zero-to-peak Wood-Anderson amplitude, mm. */
  amplitudeMm: number;
  /** Period of the peak's half-cycle, s; null when not measurable. */
  periodS: number | null;
  /** Time of the peak, µs since the epoch. */
  timeUs: number;
  /** The window searched, µs since the epoch. */
  windowStartUs: number;
  windowEndUs: number;
  evaluationMode: 'manual' | 'automatic';
}

/** A station magnitude. */
export interface ChainStationMagnitude {
  /** NET.STA. */
  stationId: string;
  /** The horizontal stream ids whose amplitudes went into it. */
  streamIds: string[];
  value: number;
  /** The mean of the horizontal amplitudes (geometric), mm. */
  amplitudeMm: number;
  periodS: number | null;
  hypocentralDistanceKm: number;
  distanceKm: number;
}

/** Everything the chain needs besides the waveforms. */
export interface ChainOptions {
  velocityModel: VelocityModel;
  /** Response per stream id (instrument-response.ts); a missing or refused one leaves the channel out of ML with a note. */
  responses: ReadonlyMap<string, ResponseResult>;
  /** The trigger settings of the automatic picker (the station profile; default profile otherwise). */
  profile: Pick<ProcessingProfile, 'staLta' | 'bandReject' | 'bands'>;
  locate?: LocateOptions;
  /** −log A0 law and station corrections (network settings). */
  minusLogA0?: MinusLogA0;
  stationCorrections?: Readonly<Record<string, number>>;
  /** Amplitudes an analyst re-picked, by stream id: they replace the automatic reading. */
  amplitudeOverrides?: ReadonlyMap<string, ChainAmplitude>;
  /**
   * Automatic picks whose residual exceeds this many σ (and 1 s) are dropped one at a time, worst
   * first, and the event located again (default 5; analysts' picks are never dropped).
   */
  outlierSigma?: number;
  /**
   * The Wood-Anderson trace of one channel (`woodAndersonFromCounts(s.samples, fs, response)` when
   * absent). A caller that locates the same windows again and again (the event screen: every pick
   * relocates) passes a memo of it: the trace does not depend on the origin, only its reading window does.
   */
  woodAnderson?: (stream: ChainStream, response: InstrumentResponse) => Float64Array;
}

/** The chain's result. */
export interface EventSolution {
  /** The picks the location was given (analysts' picks, or the automatic suggestions). */
  picks: ChainPick[];
  /** Whether the picks were automatic suggestions. */
  pickSource: 'manual' | 'automatic';
  origin: LocatedOrigin | null;
  /** Refusal of the location in words (null when located). */
  refusal: { code: string; reason: string } | null;
  arrivals: (LocatedArrival & { streamId: string; timeUs: number })[];
  amplitudes: ChainAmplitude[];
  stationMagnitudes: ChainStationMagnitude[];
  magnitude: NetworkMagnitude | null;
  notes: string[];
}

/** Minimal stream data the chain reads (a decoded stream fits). */
export interface ChainStream extends PickerChannel {
  network: string;
  station: string;
}

const stationKey = (streamId: string): string => streamId.split('.').slice(0, 2).join('.');
const pickId = (p: ChainPick): string => `${p.streamId}#${p.phase}`;

/** Settings of the network-consistency pass of the automatic picks (our own defaults). */
export interface ConsistencyOptions {
  /** A station's P more than this far from the median P of the others is picked again near it, s (default 12). */
  maxLagS?: number;
}

/**
 * Automatic picks for every station of the streams (auto-picks.ts), made consistent across the
 * network: each station is picked on its own; when at least three stations have a P, a station whose
 * P lies more than `maxLagS` from the median of all the P times (a traffic or wind trigger louder
 * than the event there), or that has none, is picked again among its triggers within `maxLagS` of
 * that median, or left without picks when it has none there. `referenceTimeUs` (e.g. the P times an event already has)
 * replaces the median when given. `profile` is one profile, or each station's (by NET.STA).
 */
export function automaticPicksForStreams(
  streams: readonly ChainStream[],
  profile: ChainOptions['profile'] | ((stationKey: string) => ChainOptions['profile']),
  referenceTimeUs?: number,
  consistency: ConsistencyOptions = {},
): ChainPick[] {
  const profileOf = (key: string): ChainOptions['profile'] => (typeof profile === 'function' ? profile(key) : profile);
  const byStation = new Map<string, ChainStream[]>();
  for (const s of streams) byStation.set(`${s.network}.${s.station}`, [...(byStation.get(`${s.network}.${s.station}`) ?? []), s]);
  const maxLagS = consistency.maxLagS ?? 12;
  const first = new Map<string, ReturnType<typeof automaticPicks>>();
  for (const [key, chans] of byStation) first.set(key, automaticPicks(chans, profileOf(key)));
  const out: ChainPick[] = [];
  // The median over every station's P: with three or more, one station's stray trigger cannot move it far.
  const allP = [...first.values()].map((ps) => ps.find((x) => x.phase === 'P')?.timeUs).filter((t): t is number => t !== undefined);
  const reference = referenceTimeUs ?? (allP.length >= 3 ? median(allP) : undefined);
  for (const [key, picks] of first) {
    let chosen = picks;
    const p = picks.find((x) => x.phase === 'P');
    if (reference !== undefined && (!p || Math.abs(p.timeUs - reference) > maxLagS * 1e6)) {
      chosen = automaticPicks(byStation.get(key) ?? [], profileOf(key), { near: { timeUs: reference, windowS: maxLagS } });
    }
    for (const x of chosen) out.push({ streamId: x.streamId, phase: x.phase, timeUs: x.timeUs, uncertaintyS: x.uncertaintyS, onset: x.onset, polarity: x.polarity, evaluationMode: 'automatic', method: chosen === picks ? x.method : `${x.method}; picked again near the other stations' P` });
  }
  return out;
}

/**
 * Locates from picks (one P and one S per station at most: where several picks of a phase fall on
 * one station, the one with the smallest uncertainty is used and a note says so), rejecting outlying
 * automatic picks as `outlierSigma` says.
 * @throws RangeError for a pick on a station that is not in `stations`, or from locateEvent.
 */
export function locatePicks(
  stations: readonly ChainStation[],
  picks: readonly ChainPick[],
  model: VelocityModel,
  options: Pick<ChainOptions, 'locate' | 'outlierSigma'> = {},
): { origin: LocatedOrigin | null; refusal: EventSolution['refusal']; arrivals: EventSolution['arrivals']; notes: string[]; used: ChainPick[] } {
  const notes: string[] = [];
  const byKey = new Map<string, ChainPick>();
  for (const p of picks) {
    const key = `${stationKey(p.streamId)}#${p.phase}`;
    const prev = byKey.get(key);
    if (prev) {
      notes.push(`two ${p.phase} picks at ${stationKey(p.streamId)}: the one with the smaller uncertainty is used`);
      if (p.uncertaintyS < prev.uncertaintyS) byKey.set(key, p);
    } else byKey.set(key, p);
  }
  let used = [...byKey.values()];
  const stationIds = new Set(stations.map((s) => `${s.network}.${s.code}`));
  for (const p of used) if (!stationIds.has(stationKey(p.streamId))) throw new RangeError(`pick on ${p.streamId}: station ${stationKey(p.streamId)} has no coordinates`);
  const locStations = stations.map((s) => ({ code: `${s.network}.${s.code}`, latitudeDeg: s.latitudeDeg, longitudeDeg: s.longitudeDeg }));
  const limit = options.outlierSigma ?? 5;
  for (;;) {
    const lp: LocatePick[] = used.map((p) => ({ id: pickId(p), stationCode: stationKey(p.streamId), phase: p.phase, timeS: p.timeUs / 1e6, uncertaintyS: p.uncertaintyS }));
    const r = locateEvent(locStations, lp, model, options.locate ?? {});
    if (!r.ok) return { origin: null, refusal: { code: r.code, reason: r.reason }, arrivals: [], notes, used };
    const byId = new Map(used.map((p) => [pickId(p), p]));
    let worst: { pick: ChainPick; z: number } | null = null;
    for (const a of r.arrivals) {
      const p = byId.get(a.pickId) as ChainPick;
      const z = Math.abs(a.residualS) / p.uncertaintyS;
      if (p.evaluationMode === 'automatic' && z > limit && Math.abs(a.residualS) > 1 && (!worst || z > worst.z)) worst = { pick: p, z };
    }
    const stationsLeft = new Set(used.filter((p) => p !== worst?.pick).map((p) => stationKey(p.streamId))).size;
    if (worst && used.length - 1 >= MIN_PHASES && stationsLeft >= MIN_STATIONS) {
      notes.push(`automatic ${worst.pick.phase} pick on ${worst.pick.streamId} left out: residual ${(worst.z * worst.pick.uncertaintyS).toFixed(2)} s is ${worst.z.toFixed(1)} σ`);
      used = used.filter((p) => p !== worst.pick);
      continue;
    }
    const arrivals = r.arrivals.map((a) => {
      const p = byId.get(a.pickId) as ChainPick;
      return { ...a, streamId: p.streamId, timeUs: p.timeUs };
    });
    return { origin: r.origin, refusal: null, arrivals, notes: [...notes, ...r.notes], used };
  }
}

/**
 * Wood-Anderson amplitudes on every horizontal channel with a usable response, read over
 * [predicted P − 1 s, predicted S + max(5 s, 2·(S − P))] (first arrivals from the origin in the model;
 * common practice: the S wave and its coda hold the peak), then station ML (mean of the horizontals)
 * and network ML (median, 1.4826·MAD). Analysts' re-picked amplitudes replace the readings.
 */
export function magnitudeFor(
  origin: LocatedOrigin,
  streams: readonly ChainStream[],
  stations: readonly ChainStation[],
  options: Pick<ChainOptions, 'velocityModel' | 'responses' | 'minusLogA0' | 'stationCorrections' | 'amplitudeOverrides' | 'woodAnderson'>,
): { amplitudes: ChainAmplitude[]; stationMagnitudes: ChainStationMagnitude[]; magnitude: NetworkMagnitude | null; notes: string[] } {
  const notes: string[] = [];
  const model = prepareVelocityModel(options.velocityModel);
  const amplitudes: ChainAmplitude[] = [];
  const byStation = new Map<string, { amps: ChainAmplitude[]; r: number; d: number }>();
  const epicentre = { latitudeDeg: origin.latitudeDeg, longitudeDeg: origin.longitudeDeg };
  const overrides = options.amplitudeOverrides ?? new Map<string, ChainAmplitude>();
  const refusedReported = new Set<string>();
  for (const s of streams) {
    if (!/[NE12]$/u.test(s.channel)) continue;
    const st = stations.find((x) => x.network === s.network && x.code === s.station);
    if (!st) continue;
    const d = greatCircleDistanceKm(epicentre, st);
    const r = Math.hypot(d, origin.depthKm);
    const key = `${s.network}.${s.station}`;
    let amp = overrides.get(s.id) ?? null;
    if (!amp) {
      const resp = options.responses.get(s.id);
      if (!resp || !resp.ok) {
        if (!refusedReported.has(s.id)) notes.push(resp ? `no ML from ${s.id}: ${resp.reason}` : `no ML from ${s.id}: no instrument response`);
        refusedReported.add(s.id);
        continue;
      }
      const fs = s.sampleRateHz;
      const originUs = origin.timeS * 1e6;
      const tp = originUs + firstArrivalTimeS(model, 'P', d, origin.depthKm) * 1e6;
      const ts = originUs + firstArrivalTimeS(model, 'S', d, origin.depthKm) * 1e6;
      const startUs = tp - 1e6;
      const endUs = ts + Math.max(5e6, 2 * (ts - tp));
      const i0 = Math.max(0, Math.floor(((startUs - s.startTimeUs) * fs) / 1e6));
      const i1 = Math.min(s.samples.length, Math.ceil(((endUs - s.startTimeUs) * fs) / 1e6));
      if (i1 - i0 < 2) {
        notes.push(`no ML from ${s.id}: the window holds no samples between the predicted P and the end of the S coda`);
        continue;
      }
      const wa = options.woodAnderson ? options.woodAnderson(s, resp.response) : woodAndersonFromCounts(s.samples, fs, resp.response);
      const peak = peakAmplitude(wa, fs, i0, i1);
      if (!(peak.amplitude > 0)) {
        notes.push(`no ML from ${s.id}: zero Wood-Anderson amplitude`);
        continue;
      }
      for (const n of resp.response.notes) if (!notes.includes(n)) notes.push(n);
      amp = {
        streamId: s.id,
        amplitudeMm: peak.amplitude,
        periodS: peak.periodS,
        timeUs: s.startTimeUs + Math.round((peak.index * 1e6) / fs),
        windowStartUs: s.startTimeUs + Math.round((i0 * 1e6) / fs),
        windowEndUs: s.startTimeUs + Math.round((i1 * 1e6) / fs),
        evaluationMode: 'automatic',
      };
    }
    amplitudes.push(amp);
    const entry = byStation.get(key) ?? { amps: [], r, d };
    entry.amps.push(amp);
    byStation.set(key, entry);
  }
  const stationMagnitudes: ChainStationMagnitude[] = [];
  for (const [key, { amps, r, d }] of byStation) {
    const opts = { ...(options.minusLogA0 ? { minusLogA0: options.minusLogA0 } : {}), stationCorrection: options.stationCorrections?.[key] ?? 0 };
    const sm = stationMagnitude(amps.map((a) => a.amplitudeMm), r, opts);
    const note = distanceNote(r);
    if (note) notes.push(`${key}: ${note}`);
    const periods = amps.map((a) => a.periodS).filter((p): p is number => p !== null);
    stationMagnitudes.push({
      stationId: key,
      streamIds: amps.map((a) => a.streamId),
      value: sm.value,
      amplitudeMm: Math.exp(amps.reduce((acc, a) => acc + Math.log(a.amplitudeMm), 0) / amps.length),
      periodS: periods.length > 0 ? periods.reduce((a, b) => a + b, 0) / periods.length : null,
      hypocentralDistanceKm: r,
      distanceKm: d,
    });
  }
  stationMagnitudes.sort((a, b) => a.distanceKm - b.distanceKm);
  const magnitude = stationMagnitudes.length > 0 ? networkMagnitude(stationMagnitudes.map((s) => s.value)) : null;
  if (!magnitude) notes.push('no ML: no horizontal channel with a usable instrument response');
  return { amplitudes, stationMagnitudes, magnitude, notes };
}

/**
 * The whole chain: picks (the given ones, or automatic suggestions when `givenPicks` is null), location,
 * amplitudes and ML. Notes say where the picks came from, what was left out and the caution.
 * @throws RangeError for a pick on an unknown station or bad model/options (the caller's error).
 */
export function solveEvent(streams: readonly ChainStream[], stations: readonly ChainStation[], givenPicks: readonly ChainPick[] | null, options: ChainOptions): EventSolution {
  const notes: string[] = [];
  const picks = givenPicks ? [...givenPicks] : automaticPicksForStreams(streams, options.profile);
  const pickSource = picks.some((p) => p.evaluationMode === 'manual') ? 'manual' : 'automatic';
  if (pickSource === 'manual' && picks.some((p) => p.evaluationMode === 'automatic')) throw new RangeError("analysts' picks and automatic picks are never mixed in one location");
  if (pickSource === 'automatic') notes.push(`${picks.length} automatic pick${picks.length === 1 ? '' : 's'} (suggestions for an analyst to confirm)`);
  if (options.velocityModel.isDefault) notes.push(`velocity model '${options.velocityModel.name}' is Seisift's placeholder: replace it with the network's own model`);
  const loc = locatePicks(stations, picks, options.velocityModel, options);
  notes.push(...loc.notes);
  let amplitudes: ChainAmplitude[] = [];
  let stationMagnitudes: ChainStationMagnitude[] = [];
  let magnitude: NetworkMagnitude | null = null;
  if (loc.origin) {
    const m = magnitudeFor(loc.origin, streams, stations, options);
    ({ amplitudes, stationMagnitudes, magnitude } = m);
    notes.push(...m.notes);
  }
  notes.push(LOCATION_CAUTION);
  return { picks: loc.used, pickSource, origin: loc.origin, refusal: loc.refusal, arrivals: loc.arrivals, amplitudes, stationMagnitudes, magnitude, notes };
}
