/**
 * Synthesis of the demo's ground velocity (m/s) and counts for one station window: every kind of
 * noise of the Kestrel Valley scenario plus every demo event that reaches the window. Deterministic:
 * each piece draws from its own generator seeded by station, window start and purpose, so a window
 * does not depend on which other windows are generated. Invented data, for the demo only.
 */
import { bandpass, filterInPlace, lowpass2, type Biquad } from './filters';
import { prngFor, type Prng } from './prng';
import {
  DEMO_CHANNELS,
  DEMO_SAMPLE_RATE_HZ,
  DEMO_SENSITIVITY,
  DEMO_WINDOW_S,
  SITE_NOISE_FACTOR,
  TRAFFIC_COUPLING,
  WIND_EXPOSURE,
  eventsInWindow,
  type DemoChannel,
  type DemoEvent,
  type DemoGlitch,
  type DemoStationCode,
  type EventAtStation,
} from './scenario';

const FS = DEMO_SAMPLE_RATE_HZ;
const N = DEMO_WINDOW_S * FS;

/** One synthesized window. */
export interface SynthWindow {
  /** Counts per channel (int32, at {@link DEMO_SENSITIVITY}). */
  counts: Record<DemoChannel, Int32Array>;
  /** Sample indices [from, to) missing from the file (a telemetry gap), when the window has one. */
  gap?: { from: number; to: number };
  /** What went into the window, in words (for the manifest). */
  contents: string[];
  /** The events in the window with their geometry at the station. */
  events: { event: DemoEvent; at: EventAtStation }[];
  /** How loud each noise source is in the window (vertical, ground velocity), m/s. */
  noise: NoiseLevels;
}

/** The noise sources' levels in one window (vertical component, m/s). */
export interface NoiseLevels {
  /** RMS of the broadband background (site and day/night factors included). */
  backgroundMS: number;
  /** Largest vehicle pass's peak amplitude (0 without a pass inside the window). */
  trafficPeakMS: number;
  /** Peak of the wind's gust envelope (0 at a sheltered station). */
  windPeakMS: number;
  /** Amplitude of the pump's 25 Hz line (0 away from KV04). */
  pumpMS: number;
}

/** A transient source is what an analyst sees in a window when its peak reaches this many times the background RMS (invented rule of the demo). */
export const STANDS_OUT_FACTOR = 2;

/**
 * The noise reason an analyst dismissing this window would give, from what the generator put in it:
 * the louder of traffic and wind when its peak stands out ({@link STANDS_OUT_FACTOR} × the background
 * RMS); else `machinery` where the pump runs; else `unknown noise` (nothing in particular, the site's
 * ordinary noise). Invented rule of the demo; events and glitches are not noise reasons here.
 */
export function dismissalReason(noise: NoiseLevels): 'traffic' | 'wind' | 'machinery' | 'unknown noise' {
  const transient = Math.max(noise.trafficPeakMS, noise.windPeakMS);
  if (transient >= STANDS_OUT_FACTOR * noise.backgroundMS) return noise.trafficPeakMS >= noise.windPeakMS ? 'traffic' : 'wind';
  if (noise.pumpMS > 0) return 'machinery';
  return 'unknown noise';
}

const chainCache = new Map<string, Biquad[]>();
/** A filter chain by shape: `band` f1…f2 of order 1 or 2, or a second-order `lowpass` at f1. */
function chain(order: 1 | 2, edges: readonly [number] | readonly [number, number], type: 'lowpass' | 'bandpass'): Biquad[] {
  const key = `${order}/${edges.join(',')}/${type}`;
  let c = chainCache.get(key);
  if (!c) {
    const [f1, f2] = edges;
    c = type === 'lowpass' || f2 === undefined ? [lowpass2(f1, FS)] : bandpass(order, f1, f2, FS);
    chainCache.set(key, c);
  }
  return c;
}

/**
 * Gaussian white noise of `n + warm` samples, filtered causally, with the first `warm` samples
 * (the filter's start-up) dropped and the rest scaled to unit RMS.
 */
function colouredNoise(rng: Prng, n: number, filter: readonly Biquad[], warm: number): Float64Array {
  const x = new Float64Array(n + warm);
  for (let i = 0; i < x.length; i++) x[i] = rng.gauss();
  filterInPlace(filter, x);
  const y = x.slice(warm);
  let ss = 0;
  for (let i = 0; i < n; i++) ss += (y[i] ?? 0) ** 2;
  const rms = Math.sqrt(ss / n) || 1;
  for (let i = 0; i < n; i++) y[i] = (y[i] ?? 0) / rms;
  return y;
}

/** Fractional hour of the day (UTC) at a time in µs. */
function hourOfDay(us: number): number {
  return (((us / 3.6e9) % 24) + 24) % 24;
}

/** Piecewise-linear interpolation in a table of [hour, value] pairs (wrapping at 24 h). */
function byHour(table: readonly (readonly [number, number])[], h: number): number {
  for (let i = 0; i + 1 < table.length; i++) {
    const a = table[i];
    const b = table[i + 1];
    if (a && b && h >= a[0] && h <= b[0]) return a[1] + ((b[1] - a[1]) * (h - a[0])) / (b[0] - a[0]);
  }
  return table[0]?.[1] ?? 0;
}

/** Vehicles per minute on the valley highway by hour (invented: quiet nights, two rush hours). */
const TRAFFIC_PER_MIN: readonly (readonly [number, number])[] = [
  [0, 0.3], [5, 0.4], [7, 6], [8.5, 9], [10, 5], [16, 5.5], [17.5, 9], [19.5, 3], [22, 1], [24, 0.3],
];
/** Wind strength on the saddle by hour, 0–1 (invented: gusty afternoons). */
const WIND_BY_HOUR: readonly (readonly [number, number])[] = [
  [0, 0.2], [9, 0.3], [13, 0.8], [15, 1], [17.5, 0.8], [20, 0.35], [24, 0.2],
];

/** Ocean microseism RMS, m/s (an inland valley: weak), rising slowly over the day as a distant storm builds (invented). */
function microseismRms(h: number): number {
  return 2e-8 * (0.85 + 0.35 * (h / 24));
}

type Components = Record<DemoChannel, Float64Array>;

function zeros(): Components {
  return { HHZ: new Float64Array(N), HHN: new Float64Array(N), HHE: new Float64Array(N) };
}

function addScaled(dst: Float64Array, src: Float64Array, scale: number, offset = 0): void {
  for (let i = 0; i < src.length; i++) {
    const k = i + offset;
    if (k < 0 || k >= dst.length) continue;
    dst[k] = (dst[k] ?? 0) + scale * (src[i] ?? 0);
  }
}

/**
 * A transient: band-limited noise under an envelope (1 − e^(−τ/rise))·e^(−τ/decay), τ ≥ 0 from the
 * onset, normalised to a peak |value| of 1. `upFirst` makes the first swing positive (explosions).
 */
function transient(rng: Prng, lengthS: number, band: readonly [number, number], riseS: number, decayS: number, upFirst = false): Float64Array {
  const n = Math.round(lengthS * FS);
  const carrier = colouredNoise(rng, n, chain(2, band, 'bandpass'), 2 * FS);
  const y = new Float64Array(n);
  let peak = 0;
  for (let i = 0; i < n; i++) {
    const t = i / FS;
    const v = (carrier[i] ?? 0) * (1 - Math.exp(-t / riseS)) * Math.exp(-t / decayS);
    y[i] = v;
    peak = Math.max(peak, Math.abs(v));
  }
  if (upFirst) {
    // The first sample above a fifth of the peak sets the polarity.
    const first = y.find((v) => Math.abs(v) > 0.2 * peak) ?? 1;
    if (first < 0) for (let i = 0; i < n; i++) y[i] = -(y[i] ?? 0);
  }
  for (let i = 0; i < n; i++) y[i] = (y[i] ?? 0) / (peak || 1);
  return y;
}

/** Adds radial/transverse motion, rotated to north/east (radial points from source to station). */
function addHorizontal(c: Components, radial: Float64Array | undefined, transverse: Float64Array | undefined, azDeg: number, scaleR: number, scaleT: number, offset: number): void {
  const az = (azDeg * Math.PI) / 180;
  if (radial) {
    addScaled(c.HHN, radial, scaleR * Math.cos(az), offset);
    addScaled(c.HHE, radial, scaleR * Math.sin(az), offset);
  }
  if (transverse) {
    addScaled(c.HHN, transverse, -scaleT * Math.sin(az), offset);
    addScaled(c.HHE, transverse, scaleT * Math.cos(az), offset);
  }
}

/** Share of a repeating source's wavelet that differs from one event to the next (the small changes of rupture and shot from event to event; invented). */
const REPEAT_VARIATION = 0.12;

/**
 * The generators of an event's waveform at a station. A one-off event draws from its own generator
 * (`key`/event). Events of one repeating source (`DemoEvent.source`) draw their wavelets from the
 * source's generator at that station, so they share source and path there, and add a small
 * {@link REPEAT_VARIATION} share from the event's own (`variation`, null for one-off events).
 */
function eventGenerators(ev: DemoEvent, station: DemoStationCode, key: string): { rng: Prng; variation: Prng | null } {
  if (!ev.source) return { rng: prngFor(`${key}/${ev.id}`), variation: null };
  return { rng: prngFor(`${station}/source/${ev.source}`), variation: prngFor(`${key}/${ev.id}/variation`) };
}

/** `x` plus {@link REPEAT_VARIATION}·(a transient of the same shape from `variation`), when given. */
function varied(x: Float64Array, variation: Prng | null, make: (rng: Prng) => Float64Array): Float64Array {
  if (!variation) return x;
  const v = make(variation);
  const y = Float64Array.from(x);
  addScaled(y, v, REPEAT_VARIATION);
  return y;
}

/**
 * An earthquake at a station: a P pulse mostly on the vertical (projected by the straight-ray
 * incidence angle), an S pulse about 3.5 times larger mostly on the horizontals (SV radial, SH
 * transverse), then an S coda on all three; spectra peaking at the corner frequency (common practice
 * shapes; invented constants). Events of a repeating source share their wavelets at a station
 * ({@link eventGenerators}).
 */
function addEarthquake(c: Components, ev: DemoEvent, at: EventAtStation, startUs: number, station: DemoStationCode, key: string): void {
  const { rng, variation } = eventGenerators(ev, station, key);
  const r = at.hypocentralKm;
  const sinI = at.epicentralKm / r;
  const cosI = ev.depthKm / r;
  const aS = at.peakVelocityMS;
  const aP = aS / 3.5;
  const p0 = Math.round((at.pArrivalUs - startUs) / (1e6 / FS));
  const s0 = Math.round((at.sArrivalUs - startUs) / (1e6 / FS));
  // A band-pass 0.6·fc … 2·fc (second order each side): the velocity spectrum peaks at the corner frequency and
  // falls off on both sides (the ω² source model of Brune 1970 falls as 1/f above the corner in
  // velocity; the steeper low side here is a simplification of the demo).
  const band: [number, number] = [0.6 * ev.cornerHz, Math.min(2 * ev.cornerHz, 30)];
  const pShape = (g: Prng): Float64Array => transient(g, 6, band, 0.03, 0.35 + 0.03 * r);
  const p = varied(pShape(rng), variation, pShape);
  addScaled(c.HHZ, p, aP * cosI, p0);
  addHorizontal(c, p, undefined, at.azimuthDeg, aP * sinI, 0, p0);
  // S carries somewhat lower frequencies than P (common practice).
  const sBand: [number, number] = [0.5 * ev.cornerHz, Math.min(1.6 * ev.cornerHz, 30)];
  const sShape = (g: Prng): Float64Array => transient(g, 10, sBand, 0.08, 0.7 + 0.05 * r);
  const sv = varied(sShape(rng), variation, sShape);
  const sh = varied(sShape(rng), variation, sShape);
  addScaled(c.HHZ, sv, -aS * 0.6 * Math.max(sinI, 0.5), s0);
  addHorizontal(c, sv, sh, at.azimuthDeg, aS * 0.8 * cosI + 0.2 * aS, aS, s0);
  const codaS = 30;
  for (const ch of DEMO_CHANNELS) {
    const coda = transient(rng, codaS, sBand, 0.5, 2.5 + 0.15 * r);
    addScaled(c[ch], coda, aS * (ch === 'HHZ' ? 0.12 : 0.22), s0);
  }
}

/**
 * A ripple-fired quarry blast at a station: eight charges 40 ms apart (the delay comb of a bench
 * blast), an impulsive high-frequency P with its first motion up (compression), a weak S and a
 * short-period surface wave (Rg) on the vertical and radial (common practice character of quarry
 * blasts; invented constants). Blasts of one quarry share their wavelets at a station
 * ({@link eventGenerators}): same face, same shot pattern.
 */
function addBlast(c: Components, ev: DemoEvent, at: EventAtStation, startUs: number, station: DemoStationCode, key: string): void {
  const { rng, variation } = eventGenerators(ev, station, key);
  const a = at.peakVelocityMS;
  const holes = 8;
  const delay = Math.round(0.04 * FS);
  const ripple = (x: Float64Array): Float64Array => {
    const y = new Float64Array(x.length + holes * delay);
    for (let k = 0; k < holes; k++) addScaled(y, x, 1 / Math.sqrt(holes), k * delay);
    let peak = 0;
    for (const v of y) peak = Math.max(peak, Math.abs(v));
    for (let i = 0; i < y.length; i++) y[i] = (y[i] ?? 0) / (peak || 1);
    return y;
  };
  const p0 = Math.round((at.pArrivalUs - startUs) / (1e6 / FS));
  const s0 = Math.round((at.sArrivalUs - startUs) / (1e6 / FS));
  const rg0 = Math.round(((at.rgArrivalUs ?? at.sArrivalUs) - startUs) / (1e6 / FS));
  const pShape = (g: Prng): Float64Array => transient(g, 3, [4, Math.min(2 * ev.cornerHz, 30)], 0.01, 0.2, true);
  const p = ripple(varied(pShape(rng), variation, pShape));
  const sinI = at.epicentralKm / Math.max(at.hypocentralKm, 1e-6);
  addScaled(c.HHZ, p, a, p0);
  addHorizontal(c, p, undefined, at.azimuthDeg, a * 0.5 * sinI, 0, p0);
  const s = ripple(transient(rng, 4, [3, 15], 0.05, 0.5));
  addHorizontal(c, s, transient(rng, 4, [3, 15], 0.05, 0.5), at.azimuthDeg, a * 0.2, a * 0.25, s0);
  const rgAmp = a * 0.5 * Math.exp(-0.08 * at.epicentralKm);
  const rg = ripple(transient(rng, 8, [1.8, 7], 0.3, 1.2));
  addScaled(c.HHZ, rg, rgAmp, rg0);
  addHorizontal(c, transient(rng, 8, [1.8, 7], 0.3, 1.2), undefined, at.azimuthDeg, rgAmp * 0.8, 0, rg0);
}

/**
 * Synthesizes one demo window at a station: background (red noise rising below 0.8 Hz, flat in
 * acceleration above it, roughly the shape of the noise models), ocean microseism 0.1–0.35 Hz,
 * daytime traffic bursts 3–20 Hz, KV04's 25 Hz pump line (with its 12.5 Hz shaft line and 37.5 Hz
 * third order; 50 Hz would sit on Nyquist), wind gusts (low-frequency heavy, gusty envelope, twice
 * as strong on the horizontals), the events that reach the window, then digitiser noise (1.2 counts
 * RMS; 3 at KV06) and rounding to counts at {@link DEMO_SENSITIVITY}; KV06 glitches last.
 * @param station demo station code
 * @param startUs first sample, µs since epoch
 * @param glitch a KV06 digitiser glitch to apply to the vertical (or to all channels, for `gap`)
 */
export function synthesizeWindow(station: DemoStationCode, startUs: number, glitch?: DemoGlitch): SynthWindow {
  const key = `${station}/${startUs}`;
  const h = hourOfDay(startUs + (DEMO_WINDOW_S / 2) * 1e6);
  const c = zeros();
  const contents: string[] = [];

  const site = SITE_NOISE_FACTOR[station];
  const daytime = h > 6 && h < 21 ? 1.4 : 1;
  const noise: NoiseLevels = { backgroundMS: 1.0e-8 * site * daytime, trafficPeakMS: 0, windPeakMS: 0, pumpMS: 0 };
  contents.push('background noise', 'ocean microseism');
  for (const ch of DEMO_CHANNELS) {
    const bg = colouredNoise(prngFor(`${key}/bg/${ch}`), N, chain(1, [0.05, 0.8], 'bandpass'), 60 * FS);
    addScaled(c[ch], bg, 1.0e-8 * site * daytime);
    const ms = colouredNoise(prngFor(`${key}/microseism/${ch}`), N, chain(2, [0.1, 0.35], 'bandpass'), 200 * FS);
    addScaled(c[ch], ms, microseismRms(h) * (ch === 'HHZ' ? 1 : 1.25) * (0.8 + 0.2 * site));
  }

  // Traffic: Poisson vehicle passes, each a Gaussian envelope on a 3–20 Hz carrier.
  const perMin = byHour(TRAFFIC_PER_MIN, h);
  const coupling = TRAFFIC_COUPLING[station];
  const trafficRng = prngFor(`${key}/traffic`);
  const envelope = new Float64Array(N);
  let vehicles = 0;
  for (let t = -10 + (-Math.log(1 - trafficRng.next()) * 60) / perMin; t < DEMO_WINDOW_S + 10; t += (-Math.log(1 - trafficRng.next()) * 60) / perMin) {
    const width = trafficRng.uniform(1.2, 4);
    const amp = coupling * 1.2e-7 * Math.exp(0.6 * trafficRng.gauss());
    if (t >= 0 && t < DEMO_WINDOW_S) {
      vehicles++;
      // Only where the highway is felt at all (the coupling at which the manifest names traffic).
      if (coupling >= 0.1) noise.trafficPeakMS = Math.max(noise.trafficPeakMS, amp);
    }
    const i0 = Math.max(0, Math.floor((t - 4 * width) * FS));
    const i1 = Math.min(N, Math.ceil((t + 4 * width) * FS));
    for (let i = i0; i < i1; i++) envelope[i] = (envelope[i] ?? 0) + amp * Math.exp(-0.5 * ((i / FS - t) / width) ** 2);
  }
  if (vehicles > 0 && coupling >= 0.1) contents.push(`traffic (${vehicles} vehicle passes${coupling < 1 ? ', far from the highway' : ''})`);
  for (const ch of DEMO_CHANNELS) {
    const carrier = colouredNoise(prngFor(`${key}/traffic/${ch}`), N, chain(2, [3, 20], 'bandpass'), 2 * FS);
    for (let i = 0; i < N; i++) c[ch][i] = (c[ch][i] ?? 0) + (carrier[i] ?? 0) * (envelope[i] ?? 0);
  }

  if (station === 'KV04') {
    contents.push('pump line 25 Hz (with 12.5 Hz and 37.5 Hz)');
    const rng = prngFor(`${key}/pump`);
    const wander = colouredNoise(rng, N, chain(2, [0.02], 'lowpass'), 100 * FS);
    for (const ch of DEMO_CHANNELS) {
      const amp = ch === 'HHZ' ? 2.5e-7 : 1.6e-7;
      if (ch === 'HHZ') noise.pumpMS = amp;
      const phases = [rng.uniform(0, 2 * Math.PI), rng.uniform(0, 2 * Math.PI), rng.uniform(0, 2 * Math.PI)];
      let phase = 0;
      for (let i = 0; i < N; i++) {
        // 25 Hz ± 0.01 Hz of slow speed wander; the phase is the integral of the frequency.
        phase += (2 * Math.PI * (25 + 0.01 * (wander[i] ?? 0))) / FS;
        const v = Math.sin(phase + (phases[0] ?? 0)) + 0.15 * Math.sin(phase / 2 + (phases[1] ?? 0)) + 0.1 * Math.sin(1.5 * phase + (phases[2] ?? 0));
        c[ch][i] = (c[ch][i] ?? 0) + amp * (1 + 0.03 * Math.sin((2 * Math.PI * i) / (37 * FS))) * v;
      }
    }
  }

  const exposure = WIND_EXPOSURE[station];
  if (exposure > 0) {
    const strength = exposure * byHour(WIND_BY_HOUR, h);
    if (strength >= 0.05) contents.push(`wind gusts (strength ${strength.toFixed(2)} of the saddle's afternoon peak)`);
    const gust = colouredNoise(prngFor(`${key}/gust`), N, chain(2, [0.05], 'lowpass'), 100 * FS);
    let gustPeak = 0;
    for (let i = 0; i < N; i++) gustPeak = Math.max(gustPeak, Math.exp(0.9 * (gust[i] ?? 0) - 0.4));
    // Only wind the manifest names (strength ≥ 0.05).
    if (strength >= 0.05) noise.windPeakMS = 1.5e-7 * strength * gustPeak;
    for (const ch of DEMO_CHANNELS) {
      const low = colouredNoise(prngFor(`${key}/wind-low/${ch}`), N, chain(2, [2], 'lowpass'), 10 * FS);
      const broad = colouredNoise(prngFor(`${key}/wind-broad/${ch}`), N, chain(2, [0.5, 30], 'bandpass'), 2 * FS);
      const amp = 1.5e-7 * strength * (ch === 'HHZ' ? 1 : 2);
      for (let i = 0; i < N; i++) {
        const env = Math.exp(0.9 * (gust[i] ?? 0) - 0.4);
        c[ch][i] = (c[ch][i] ?? 0) + amp * env * (0.8 * (low[i] ?? 0) + 0.35 * (broad[i] ?? 0));
      }
    }
  }

  const events = eventsInWindow(station, startUs);
  for (const { event, at } of events) {
    contents.push(`${event.type} ${event.id} (hypocentral distance ${at.hypocentralKm.toFixed(1)} km)`);
    if (event.type === 'earthquake') addEarthquake(c, event, at, startUs, station, key);
    else addBlast(c, event, at, startUs, station, key);
  }

  const digitiserRms = station === 'KV06' ? 3 : 1.2;
  const counts = { HHZ: new Int32Array(N), HHN: new Int32Array(N), HHE: new Int32Array(N) };
  for (const ch of DEMO_CHANNELS) {
    const rng = prngFor(`${key}/digitiser/${ch}`);
    const v = c[ch];
    const out = counts[ch];
    for (let i = 0; i < N; i++) out[i] = Math.round((v[i] ?? 0) * DEMO_SENSITIVITY + digitiserRms * rng.gauss());
  }

  let gap: SynthWindow['gap'];
  if (glitch) {
    const rng = prngFor(`${key}/glitch`);
    const z = counts.HHZ;
    if (glitch === 'spikes') {
      const k = 3 + Math.floor(rng.next() * 4);
      for (let j = 0; j < k; j++) {
        const i = Math.floor(rng.uniform(0.05, 0.95) * N);
        z[i] = (z[i] ?? 0) + (rng.next() < 0.5 ? -1 : 1) * Math.round(rng.uniform(30_000, 120_000));
      }
      contents.push(`instrument glitch: ${k} single-sample spikes on HHZ`);
    } else if (glitch === 'flat') {
      const i0 = Math.round(62.4 * FS);
      z.fill(0, i0, i0 + Math.round(4.3 * FS));
      contents.push('instrument glitch: HHZ reads 0 for 4.3 s from 62.4 s (digitiser dropout)');
    } else if (glitch === 'step') {
      const i0 = Math.round(71.3 * FS);
      for (let i = i0; i < N; i++) z[i] = (z[i] ?? 0) + 4200;
      contents.push('instrument glitch: HHZ DC step of +4200 counts at 71.3 s');
    } else {
      gap = { from: 48 * FS, to: 54 * FS };
      contents.push('telemetry gap: 6 s of records missing from 48 s on all channels');
    }
  }
  return { counts, contents, events, noise, ...(gap ? { gap } : {}) };
}
