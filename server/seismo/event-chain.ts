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
import { automaticPicks, automaticPicksInWindow, automaticSPick, automaticSPickInWindow, type AutomaticPick, type PickerChannel, type PickOnset, type PickPolarity } from './auto-picks';
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
  /** Without station coordinates: a station's P more than this far from the median P of the others is picked again near it, s (default 12). */
  maxLagS?: number;
  /**
   * Station coordinates and the network's velocity model: with them, the P times are checked against
   * each other by the travel-time bound ({@link consistentPTimes}) and every station is picked again
   * inside the span the others allow ({@link predictedPWindow}).
   */
  geometry?: { stations: readonly ChainStation[]; model: VelocityModel };
  /** P picks the event already has on other stations (e.g. from members added before): trusted, never picked again. */
  anchors?: readonly { streamId: string; timeUs: number; uncertaintyS: number }[];
  /** Allowance beyond the bound for the model's and the stations' (elevation) own errors, s (default 0.3, our own). */
  toleranceS?: number;
  /** A station's P is replaced by the one inside its span when that onset's SNR is this many times the old one's (default 2, our own). */
  replaceSnrFactor?: number;
}

/**
 * Largest horizontal slowness a first P can have in a flat layered model, s/km: a ray's horizontal
 * slowness p = sin i / v is the same in every layer it crosses (Snell's law) and at most 1/v there,
 * so p ≤ 1 / (the slowest P speed of the layers) for the direct wave and every head wave alike
 * (common practice). The P travel time of one source then changes by at most p_max per km along the
 * surface: |T_i − T_j| ≤ p_max·Δ_ij between any two stations, wherever the source is.
 */
export function maxPSlownessSKm(model: VelocityModel): number {
  return 1 / Math.min(...model.layers.map((l) => l.vpKmS));
}

/** A station's P time with its position. */
export interface StationPTime {
  /** NET.STA. */
  key: string;
  latitudeDeg: number;
  longitudeDeg: number;
  /** µs since the epoch. */
  timeUs: number;
  /** 1-σ, s. */
  uncertaintyS: number;
  /** Trusted (e.g. an anchor): never left out by {@link consistentPTimes}. */
  fixed?: boolean;
}

/** Whether two stations' P times can come from one source: |t_a − t_b| ≤ p_max·Δ + tolerance + 2(σ_a + σ_b). */
function pairConsistent(a: StationPTime, b: StationPTime, maxSlownessSKm: number, toleranceS: number): boolean {
  const d = greatCircleDistanceKm(a, b);
  return Math.abs(a.timeUs - b.timeUs) / 1e6 <= d * maxSlownessSKm + toleranceS + 2 * (a.uncertaintyS + b.uncertaintyS);
}

/**
 * The P times that fit one source together: every pair must satisfy the travel-time bound of
 * {@link maxPSlownessSKm} (plus `toleranceS` and twice both picks' σ). While some pair does not, the
 * station(s) in the most failing pairs are left out (all of them on a tie: two stations that
 * contradict only each other cannot say which is wrong); `fixed` times are never left out.
 * Pure; O(N³) for N stations (a network's event has tens at most).
 */
export function consistentPTimes(times: readonly StationPTime[], maxSlownessSKm: number, toleranceS: number): StationPTime[] {
  let kept = [...times];
  for (;;) {
    const failures = kept.map((a) => (a.fixed ? 0 : kept.filter((b) => b !== a && !pairConsistent(a, b, maxSlownessSKm, toleranceS)).length));
    const worst = Math.max(0, ...failures);
    if (worst === 0) return kept;
    kept = kept.filter((_, i) => failures[i] !== worst);
  }
}

/**
 * The span a station's P can lie in, given other stations' P times of the same source: the
 * intersection over the others j of [t_j − p_max·Δ_j − tol_j, t_j + p_max·Δ_j + tol_j] with
 * tol_j = `toleranceS` + 2σ_j (the bound of {@link maxPSlownessSKm}). µs since the epoch; null
 * without others or when the spans do not meet (the others contradict each other).
 */
export function predictedPWindow(station: { latitudeDeg: number; longitudeDeg: number }, others: readonly StationPTime[], maxSlownessSKm: number, toleranceS: number): { fromUs: number; toUs: number } | null {
  if (others.length === 0) return null;
  let fromUs = -Infinity;
  let toUs = Infinity;
  for (const o of others) {
    const reach = (greatCircleDistanceKm(station, o) * maxSlownessSKm + toleranceS + 2 * o.uncertaintyS) * 1e6;
    fromUs = Math.max(fromUs, o.timeUs - reach);
    toUs = Math.min(toUs, o.timeUs + reach);
  }
  return toUs >= fromUs ? { fromUs: Math.round(fromUs), toUs: Math.round(toUs) } : null;
}

/**
 * The ratio Vp/Vs of a layered model for the Wadati relation: the median over its layers (exact for a
 * model of one ratio, as most crustal models nearly are).
 */
export function vpVsRatio(model: VelocityModel): number {
  return median(model.layers.map((l) => l.vpKmS / l.vsKmS));
}

/**
 * Origin time from one station's P and S times by the Wadati relation t_S − t_P = (Vp/Vs − 1)(t_P − t_0)
 * (Wadati 1933; common practice, exact for a constant Vp/Vs), µs since the epoch.
 */
export function wadatiOriginTimeUs(pTimeUs: number, sTimeUs: number, vpVs: number): number {
  return pTimeUs - (sTimeUs - pTimeUs) / (vpVs - 1);
}

/** Shortest S − P the picker reads, s (auto-picks.ts `minSMinusPS` default). */
const PICKER_MIN_S_MINUS_P_S = 0.4;

/**
 * S picks made consistent with each other through the origin time (Wadati relation): each station's
 * S − P proposes an origin time t_0; under it every station's S is predicted at
 * t_P + (Vp/Vs − 1)(t_P − t_0), with an allowance of 0.25 s + 10 % of the predicted S − P (our own:
 * pick and Vp/Vs errors). A station's S within the allowance supports t_0; a station whose predicted
 * S − P is below what the picker reads (0.4 s) can have no S pick; any other station's S is sought
 * again inside the allowance (auto-picks.ts `automaticSPickInWindow`). The t_0 supported by the most
 * stations' S picks as they stand wins; ties go to the one with the most S picks after the search
 * inside the spans, then to the later t_0 (the picker errs late far more often than early: it takes a
 * surface wave, the coda or a later noise burst for an S it cannot see; our own rule). Each station
 * then keeps the S that fits the winner, or none (a surface wave or a later traffic burst taken for
 * the S, or an S closer to the P than the picker reads). Changes `chosen` in place.
 */
function consistentSPicks(
  chosen: Map<string, { picks: ReturnType<typeof automaticPicks>; note: string | null }>,
  byStation: ReadonlyMap<string, ChainStream[]>,
  profileOf: (key: string) => ChainOptions['profile'],
  vpVs: number,
): void {
  if (!(vpVs > 1)) return;
  const rows = [...chosen.entries()].map(([key, c]) => ({ key, p: c.picks.find((x) => x.phase === 'P'), s: c.picks.find((x) => x.phase === 'S') }));
  const withP = rows.filter((r) => r.p !== undefined);
  const origins = withP.filter((r) => r.s !== undefined).map((r) => wadatiOriginTimeUs((r.p as AutomaticPick).timeUs, (r.s as AutomaticPick).timeUs, vpVs));
  if (origins.length === 0) return;
  const spanOf = (pUs: number, t0: number): { predUs: number; tolUs: number } | null => {
    const sp = ((vpVs - 1) * (pUs - t0)) / 1e6;
    return sp < PICKER_MIN_S_MINUS_P_S ? null : { predUs: pUs + sp * 1e6, tolUs: (0.25 + 0.1 * sp) * 1e6 };
  };
  const standing = (t0: number): number =>
    withP.filter((r) => {
      const span = spanOf((r.p as AutomaticPick).timeUs, t0);
      return span !== null && r.s !== undefined && Math.abs(r.s.timeUs - span.predUs) <= span.tolUs;
    }).length;
  const scores = origins.map(standing);
  const top = Math.max(...scores);
  let best: { support: number; t0: number; plan: Map<string, AutomaticPick | null> } | null = null;
  for (const [i, t0] of origins.entries()) {
    if (scores[i] !== top) continue;
    const plan = new Map<string, AutomaticPick | null>();
    let support = 0;
    for (const r of withP) {
      const p = r.p as AutomaticPick;
      const span = spanOf(p.timeUs, t0);
      if (!span) {
        plan.set(r.key, null);
        continue;
      }
      if (r.s && Math.abs(r.s.timeUs - span.predUs) <= span.tolUs) {
        plan.set(r.key, r.s);
        support += 1;
        continue;
      }
      const again = automaticSPickInWindow(byStation.get(r.key) ?? [], p.timeUs, profileOf(r.key), { fromUs: span.predUs - span.tolUs, toUs: span.predUs + span.tolUs });
      plan.set(r.key, again);
      if (again) support += 1;
    }
    // Ties: the later origin time (an automatic S errs late far more often than early).
    if (!best || support > best.support || (support === best.support && t0 > best.t0)) best = { support, t0, plan };
  }
  if (!best) return;
  for (const r of withP) {
    const c = chosen.get(r.key);
    if (!c || !best.plan.has(r.key)) continue;
    const s = best.plan.get(r.key) ?? null;
    if (s === r.s) continue;
    c.picks = [...c.picks.filter((x) => x.phase !== 'S'), ...(s ? [s] : [])];
  }
}

/**
 * Automatic picks for every station of the streams (auto-picks.ts), made consistent across the
 * network. Each station is picked on its own first. Then:
 * - with station coordinates and a model (`consistency.geometry`): the P times that fit one source
 *   ({@link consistentPTimes}, with the `anchors` the event already has) are the reference; when they
 *   come from at least two stations, each of those stations is picked again inside the span the
 *   others allow ({@link predictedPWindow}, auto-picks.ts `automaticPicksInWindow`) and takes that P
 *   when its onset stands out `replaceSnrFactor` times more than the first one's did (a noise onset
 *   just ahead of the true one), and every other station (a traffic or wind trigger louder than the
 *   event there, or no trigger at all) is picked only inside the span the reference allows, or left
 *   without picks when nothing stands out there; then the S picks are made consistent with each
 *   other through the origin time their S − P times give ({@link consistentSPicks});
 * - otherwise, when at least three stations have a P, a station whose P lies more than `maxLagS`
 *   from the median of all the P times, or that has none, is picked again among its triggers within
 *   `maxLagS` of that median, or left without picks when it has none there. `referenceTimeUs` (e.g.
 *   the P times an event already has) replaces the median when given.
 * `profile` is one profile, or each station's (by NET.STA).
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
  const chosen = new Map<string, { picks: ReturnType<typeof automaticPicks>; note: string | null }>();
  for (const [key, picks] of first) chosen.set(key, { picks, note: null });
  const geo = consistency.geometry;
  let checked = false;
  if (geo) {
    const tol = consistency.toleranceS ?? 0.3;
    const pMax = maxPSlownessSKm(geo.model);
    const where = new Map(geo.stations.map((s) => [`${s.network}.${s.code}`, s]));
    const times: StationPTime[] = [];
    for (const a of consistency.anchors ?? []) {
      const key = stationKey(a.streamId);
      const st = where.get(key);
      if (st && !byStation.has(key)) times.push({ key, latitudeDeg: st.latitudeDeg, longitudeDeg: st.longitudeDeg, timeUs: a.timeUs, uncertaintyS: a.uncertaintyS, fixed: true });
    }
    for (const [key, picks] of first) {
      const p = picks.find((x) => x.phase === 'P');
      const st = where.get(key);
      if (p && st) times.push({ key, latitudeDeg: st.latitudeDeg, longitudeDeg: st.longitudeDeg, timeUs: p.timeUs, uncertaintyS: p.uncertaintyS });
    }
    const reference = consistentPTimes(times, pMax, tol);
    if (reference.length >= 2) {
      checked = true;
      const factor = consistency.replaceSnrFactor ?? 2;
      // The stations that fit: each against the others, its P replaced only by a clearly better onset.
      for (const r of reference) {
        if (r.fixed) continue;
        const st = where.get(r.key);
        const window = st ? predictedPWindow(st, reference.filter((o) => o !== r), pMax, tol) : null;
        if (!window) continue;
        const chans = byStation.get(r.key) ?? [];
        // The S only for a P that is taken (most are not: reading it for every station would double the work).
        const again = automaticPicksInWindow(chans, profileOf(r.key), window, { incumbentUs: r.timeUs, withS: false });
        const p = again?.picks.find((x) => x.phase === 'P');
        if (!again || !p || again.incumbentSnr === null) continue;
        if (Math.abs(p.timeUs - r.timeUs) > Math.max(2 * r.uncertaintyS, 0.1) * 1e6 && again.snr >= factor * again.incumbentSnr) {
          const s = automaticSPick(chans, p.timeUs, profileOf(r.key));
          chosen.set(r.key, { picks: s ? [p, s] : [p], note: `picked again inside the span the other stations' P times allow (its first onset stood out ${again.incumbentSnr.toFixed(1)}×, this one ${again.snr.toFixed(1)}×)` });
          r.timeUs = p.timeUs;
          r.uncertaintyS = p.uncertaintyS;
        }
      }
      // The stations that do not fit, or have no P: only inside the span the reference allows.
      const fits = new Set(reference.map((r) => r.key));
      for (const key of byStation.keys()) {
        if (fits.has(key)) continue;
        const st = where.get(key);
        if (!st) continue;
        const window = predictedPWindow(st, reference, pMax, tol);
        const again = window ? automaticPicksInWindow(byStation.get(key) ?? [], profileOf(key), window) : null;
        chosen.set(key, { picks: again?.picks ?? [], note: "picked inside the span the other stations' P times allow" });
      }
      consistentSPicks(chosen, byStation, profileOf, vpVsRatio(geo.model));
    }
  }
  if (!checked) {
    // The median over every station's P: with three or more, one station's stray trigger cannot move it far.
    const allP = [...first.values()].map((ps) => ps.find((x) => x.phase === 'P')?.timeUs).filter((t): t is number => t !== undefined);
    const reference = referenceTimeUs ?? (allP.length >= 3 ? median(allP) : undefined);
    for (const [key, picks] of first) {
      const p = picks.find((x) => x.phase === 'P');
      if (reference !== undefined && (!p || Math.abs(p.timeUs - reference) > maxLagS * 1e6)) {
        chosen.set(key, { picks: automaticPicks(byStation.get(key) ?? [], profileOf(key), { near: { timeUs: reference, windowS: maxLagS } }), note: "picked again near the other stations' P" });
      }
    }
  }
  const out: ChainPick[] = [];
  for (const { picks, note } of chosen.values()) {
    for (const x of picks) out.push({ streamId: x.streamId, phase: x.phase, timeUs: x.timeUs, uncertaintyS: x.uncertaintyS, onset: x.onset, polarity: x.polarity, evaluationMode: 'automatic', method: note && !x.method.includes('inside the span') ? `${x.method}; ${note}` : x.method });
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
  const picks = givenPicks ? [...givenPicks] : automaticPicksForStreams(streams, options.profile, undefined, { geometry: { stations, model: options.velocityModel } });
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
