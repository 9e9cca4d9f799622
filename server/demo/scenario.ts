/**
 * The invented Kestrel Valley scenario (network XX, stations KV01–KV06): where the noise sources and
 * the demo events are, and which windows the demo day holds. Everything here is made up for the
 * demo; nothing is a check value.
 */
import { demoNetwork, demoStations } from '@server/db/seed-demo';
import { prngFor } from './prng';

/** Sample rate of every demo channel, Hz. */
export const DEMO_SAMPLE_RATE_HZ = 100;
/** Length of every demo window, s. */
export const DEMO_WINDOW_S = 120;
/** Demo sensitivity, counts per m/s (the value seed-demo.ts gives every channel). */
export const DEMO_SENSITIVITY = 1.5e9;
/** The demo day (UTC). */
export const DEMO_DAY = '2026-03-14';
/** Components of every MiniSEED demo window (location 00). */
export const DEMO_CHANNELS = ['HHZ', 'HHN', 'HHE'] as const;
/** One demo channel code. */
export type DemoChannel = (typeof DEMO_CHANNELS)[number];
/** P-wave speed of the demo crust, km/s (common practice value for upper crust). */
export const VP_KM_S = 6.0;
/** S-wave speed of the demo crust, km/s (common practice value for upper crust). */
export const VS_KM_S = 3.5;
/** Speed of the short-period surface wave (Rg) of shallow blasts, km/s (common practice order of magnitude). */
export const RG_KM_S = 2.2;
/** Mean Earth radius, km (common practice spherical Earth). */
export const EARTH_RADIUS_KM = 6371.0;

/** The quarry face, about 1.4 km north-east of KV02 (invented). */
export const QUARRY = { latitude: 46.2832, longitude: 11.1108 } as const;

/** A demo station with its coordinates (from seed-demo.ts). */
export type DemoStation = (typeof demoStations)[number];
/** Demo station codes. */
export type DemoStationCode = DemoStation['code'];

/** Network code of the demo. */
export const DEMO_NETWORK = demoNetwork;

/**
 * How strongly each station feels the valley highway's traffic (1 = KV03, 300 m away; invented).
 */
export const TRAFFIC_COUPLING: Record<DemoStationCode, number> = { KV01: 0.04, KV02: 0.12, KV03: 1, KV04: 0.3, KV05: 0.06, KV06: 0.08 };
/** Site factor of the background noise (bedrock vault quiet, valley floor louder; invented). */
export const SITE_NOISE_FACTOR: Record<DemoStationCode, number> = { KV01: 0.7, KV02: 1.0, KV03: 1.4, KV04: 1.2, KV05: 1.0, KV06: 0.9 };
/** How much of the saddle's wind each station gets (KV05 on the saddle, KV01 on the ridge; invented). */
export const WIND_EXPOSURE: Record<DemoStationCode, number> = { KV01: 0.2, KV02: 0, KV03: 0, KV04: 0, KV05: 1, KV06: 0.05 };

/** A demo source: an earthquake or a quarry blast. */
export interface DemoEvent {
  id: string;
  type: 'earthquake' | 'quarry blast';
  /** Origin time, µs since epoch (UTC). */
  originTimeUs: number;
  latitude: number;
  longitude: number;
  depthKm: number;
  /**
   * Earthquakes: peak S ground velocity on the horizontals at 10 km hypocentral distance, m/s.
   * Blasts: peak P ground velocity on the vertical at 1 km, m/s.
   */
  strengthMS: number;
  /** Corner frequency of the source spectrum, Hz (the ground velocity spectrum peaks there). */
  cornerHz: number;
  /**
   * The repeating source the event belongs to, if any: events of one source (the quarry's bench
   * blasts with the same shot pattern; a cluster of quakes on one fault patch) share their source
   * wavelet and, being within a few hundred metres of each other, their paths — so one station
   * records them nearly alike (synth.ts draws their waveforms from the source and station, not from
   * the event). Undefined: a one-off source with its own waveform.
   */
  source?: DemoSourceId;
}

/** The demo's repeating sources (invented). */
export const DEMO_SOURCES = {
  'kv-quarry': 'the valley quarry: bench blasts of one shot pattern (eight holes, 40 ms apart)',
  'kv-south-cluster': 'a small cluster of quakes 3.8 km deep under the south of the valley, on one fault patch',
} as const;
/** A repeating source's id. */
export type DemoSourceId = keyof typeof DEMO_SOURCES;

/** Time on the demo day as µs since epoch; `hms` is `HH:MM:SS` or `HH:MM:SS.sss`. */
export function demoTimeUs(hms: string): number {
  const ms = Date.parse(`${DEMO_DAY}T${hms}Z`);
  if (!Number.isFinite(ms)) throw new RangeError(`demo time '${hms}' is not HH:MM:SS[.sss]`);
  return ms * 1000;
}

/**
 * The demo day's sources (invented): seven small local earthquakes at 3–8 km depth — three of them a
 * tight cluster (kv-eq-4, kv-eq-6, kv-eq-7: one fault patch, within about 100 m, one source wavelet)
 * — and three quarry blasts near midday from the same quarry face and shot pattern.
 */
export const DEMO_EVENTS: readonly DemoEvent[] = [
  { id: 'kv-eq-1', type: 'earthquake', originTimeUs: demoTimeUs('03:17:22.400'), latitude: 46.242, longitude: 11.09, depthKm: 5.2, strengthMS: 2.88e-6, cornerHz: 7 },
  { id: 'kv-eq-2', type: 'earthquake', originTimeUs: demoTimeUs('07:42:05.150'), latitude: 46.271, longitude: 11.135, depthKm: 7.1, strengthMS: 3.2e-6, cornerHz: 9 },
  { id: 'kv-eq-3', type: 'earthquake', originTimeUs: demoTimeUs('10:12:33.820'), latitude: 46.2585, longitude: 11.0521, depthKm: 4.4, strengthMS: 2.56e-6, cornerHz: 8 },
  { id: 'kv-bl-1', type: 'quarry blast', originTimeUs: demoTimeUs('11:58:30.000'), latitude: QUARRY.latitude, longitude: QUARRY.longitude, depthKm: 0.02, strengthMS: 1.2e-5, cornerHz: 12, source: 'kv-quarry' },
  { id: 'kv-bl-2', type: 'quarry blast', originTimeUs: demoTimeUs('12:34:10.000'), latitude: QUARRY.latitude + 0.0006, longitude: QUARRY.longitude - 0.0009, depthKm: 0.02, strengthMS: 9.0e-6, cornerHz: 12, source: 'kv-quarry' },
  { id: 'kv-bl-3', type: 'quarry blast', originTimeUs: demoTimeUs('12:57:20.000'), latitude: QUARRY.latitude - 0.0004, longitude: QUARRY.longitude + 0.0005, depthKm: 0.02, strengthMS: 1.05e-5, cornerHz: 12, source: 'kv-quarry' },
  { id: 'kv-eq-4', type: 'earthquake', originTimeUs: demoTimeUs('16:05:48.700'), latitude: 46.215, longitude: 11.105, depthKm: 3.8, strengthMS: 9.6e-6, cornerHz: 6.5, source: 'kv-south-cluster' },
  { id: 'kv-eq-6', type: 'earthquake', originTimeUs: demoTimeUs('18:47:12.300'), latitude: 46.2154, longitude: 11.1056, depthKm: 3.85, strengthMS: 6.4e-6, cornerHz: 6.5, source: 'kv-south-cluster' },
  { id: 'kv-eq-5', type: 'earthquake', originTimeUs: demoTimeUs('21:48:10.900'), latitude: 46.295, longitude: 11.07, depthKm: 6.0, strengthMS: 3.2e-6, cornerHz: 7.5 },
  { id: 'kv-eq-7', type: 'earthquake', originTimeUs: demoTimeUs('23:31:05.600'), latitude: 46.2147, longitude: 11.1046, depthKm: 3.75, strengthMS: 7.7e-6, cornerHz: 6.5, source: 'kv-south-cluster' },
];

/**
 * Great-circle distance between two points on a sphere of radius {@link EARTH_RADIUS_KM}
 * (haversine formula, common practice), km. Inputs in degrees.
 */
export function epicentralDistanceKm(lat1: number, lon1: number, lat2: number, lon2: number): number {
  const rad = Math.PI / 180;
  const dLat = (lat2 - lat1) * rad;
  const dLon = (lon2 - lon1) * rad;
  const a = Math.sin(dLat / 2) ** 2 + Math.cos(lat1 * rad) * Math.cos(lat2 * rad) * Math.sin(dLon / 2) ** 2;
  return 2 * EARTH_RADIUS_KM * Math.asin(Math.min(1, Math.sqrt(a)));
}

/**
 * Forward azimuth from point 1 to point 2 on a sphere, degrees clockwise from north in [0, 360)
 * (common practice spherical formula θ = atan2(sin Δλ cos φ2, cos φ1 sin φ2 − sin φ1 cos φ2 cos Δλ)).
 */
export function azimuthDeg(lat1: number, lon1: number, lat2: number, lon2: number): number {
  const rad = Math.PI / 180;
  const p1 = lat1 * rad;
  const p2 = lat2 * rad;
  const dl = (lon2 - lon1) * rad;
  const y = Math.sin(dl) * Math.cos(p2);
  const x = Math.cos(p1) * Math.sin(p2) - Math.sin(p1) * Math.cos(p2) * Math.cos(dl);
  const deg = (Math.atan2(y, x) / rad + 360) % 360;
  return deg;
}

/** Geometry and travel times of one event at one station. */
export interface EventAtStation {
  epicentralKm: number;
  hypocentralKm: number;
  /** Azimuth from the source to the station, degrees from north. */
  azimuthDeg: number;
  /** Straight-ray P and S arrival times, µs since epoch: origin + R/VP and origin + R/VS. */
  pArrivalUs: number;
  sArrivalUs: number;
  /** Rg arrival of a blast (origin + epicentral distance / RG), µs; undefined for earthquakes. */
  rgArrivalUs?: number;
  /** Peak ground velocity of the strongest phase at this station, m/s (the amplitude model below). */
  peakVelocityMS: number;
}

/** Quality factor of the demo crust's S waves (common practice order of magnitude for local paths). */
const Q_S = 250;

/**
 * Where and when an event arrives at a station. Travel times use a homogeneous half-space with
 * straight rays: t = R / v with R the hypocentral distance √(Δ² + h²) (common practice first-order
 * approximation for local events). Amplitudes: earthquakes decay as (10 km / R)·exp(−π·fc·(R − 10)/(Q·VS))
 * (geometric spreading and anelastic attenuation at the corner frequency); blasts as
 * (1 km / R)·exp(−0.25·(R − 1)) (strong attenuation of their high frequencies; invented constant).
 */
export function eventAtStation(ev: DemoEvent, st: { latitude: number; longitude: number }): EventAtStation {
  const epi = epicentralDistanceKm(ev.latitude, ev.longitude, st.latitude, st.longitude);
  const hypo = Math.hypot(epi, ev.depthKm);
  const r = Math.max(hypo, 0.5);
  const pArrivalUs = ev.originTimeUs + Math.round((hypo / VP_KM_S) * 1e6);
  const sArrivalUs = ev.originTimeUs + Math.round((hypo / VS_KM_S) * 1e6);
  const az = azimuthDeg(ev.latitude, ev.longitude, st.latitude, st.longitude);
  if (ev.type === 'earthquake') {
    const peak = ev.strengthMS * (10 / r) * Math.exp((-Math.PI * ev.cornerHz * (r - 10)) / (Q_S * VS_KM_S));
    return { epicentralKm: epi, hypocentralKm: hypo, azimuthDeg: az, pArrivalUs, sArrivalUs, peakVelocityMS: peak };
  }
  const peak = ev.strengthMS * (1 / r) * Math.exp(-0.25 * (r - 1));
  return { epicentralKm: epi, hypocentralKm: hypo, azimuthDeg: az, pArrivalUs, sArrivalUs, rgArrivalUs: ev.originTimeUs + Math.round((epi / RG_KM_S) * 1e6), peakVelocityMS: peak };
}

/** A station records an event window when the event's peak velocity there reaches this, m/s (an STA/LTA trigger in the valley's noise; invented). */
export const RECORD_THRESHOLD_MS = 3.84e-6;
/** An event window starts this long before the origin time, s (the STA/LTA needs 30 s of noise first; a short lead leaves traffic little time to trigger before the P). */
export const EVENT_LEAD_S = 33;

/** A glitch of KV06's older digitiser, applied to the vertical's counts. */
export type DemoGlitch = 'spikes' | 'flat' | 'step' | 'gap';

/** One planned demo file. */
export interface PlannedWindow {
  station: DemoStationCode;
  /** First sample, µs since epoch (whole seconds). */
  startUs: number;
  format: 'mseed' | 'csv';
  /** Channels in the file (CSV: one). */
  channels: readonly DemoChannel[];
  glitch?: DemoGlitch;
  /**
   * Why this window exists: `routine` (every N minutes), `trigger` (an event), `manual` (CSV export),
   * `history` (a routine window of the days before the demo day, already dismissed as noise).
   */
  reason: 'routine' | 'trigger' | 'manual' | 'history';
}

/** Routine windows per station (HH:MM:SS of the first sample), spread over the day (invented). */
const ROUTINE: Record<DemoStationCode, readonly (string | [string, DemoGlitch])[]> = {
  KV01: ['01:20:00', '09:05:30', '14:40:00', '19:05:10'],
  KV02: ['02:45:00', '08:10:20', '13:30:00', '17:55:00'],
  KV03: ['04:02:00', '09:26:40', '12:10:00', '17:20:30', '23:15:00'],
  KV04: ['00:40:00', '06:55:00', '11:20:00', '20:10:00'],
  KV05: ['05:30:00', '10:45:00', '14:55:00', '16:40:00'],
  KV06: [['03:50:00', 'spikes'], ['08:35:00', 'flat'], ['13:05:00', 'step'], ['18:25:00', 'gap'], ['22:40:00', 'spikes']],
};

/** Single-channel CSV windows, as an operator exports them by hand (invented). */
const MANUAL_CSV: readonly { station: DemoStationCode; at: string }[] = [
  { station: 'KV03', at: '08:05:00' },
  { station: 'KV04', at: '03:00:00' },
  { station: 'KV05', at: '15:22:00' },
];

/** The station record of a code. */
export function demoStation(code: DemoStationCode): DemoStation {
  const st = demoStations.find((s) => s.code === code);
  if (!st) throw new RangeError(`unknown demo station ${code}`);
  return st;
}

/**
 * The demo day's windows, in time order: routine windows, one window per event at every station
 * where the event's peak velocity reaches {@link RECORD_THRESHOLD_MS} (and always at least the three
 * nearest stations, so a multi-station event can be grouped), and the manual CSV windows.
 * @throws RangeError when two windows of one station overlap (the plan would contradict itself)
 */
export function planDemoWindows(): PlannedWindow[] {
  const plan: PlannedWindow[] = [];
  for (const st of demoStations) {
    for (const entry of ROUTINE[st.code]) {
      const [at, glitch] = typeof entry === 'string' ? [entry, undefined] : entry;
      plan.push({ station: st.code, startUs: demoTimeUs(at), format: 'mseed', channels: DEMO_CHANNELS, reason: 'routine', ...(glitch ? { glitch } : {}) });
    }
  }
  for (const ev of DEMO_EVENTS) {
    const startUs = Math.floor(ev.originTimeUs / 1e6 - EVENT_LEAD_S) * 1e6;
    const ranked = demoStations
      .map((st) => ({ st, at: eventAtStation(ev, st) }))
      .sort((a, b) => a.at.hypocentralKm - b.at.hypocentralKm);
    ranked.forEach(({ st, at }, k) => {
      if (k < 3 || at.peakVelocityMS >= RECORD_THRESHOLD_MS) {
        plan.push({ station: st.code, startUs, format: 'mseed', channels: DEMO_CHANNELS, reason: 'trigger' });
      }
    });
  }
  for (const m of MANUAL_CSV) plan.push({ station: m.station, startUs: demoTimeUs(m.at), format: 'csv', channels: ['HHZ'], reason: 'manual' });
  plan.sort((a, b) => a.startUs - b.startUs || a.station.localeCompare(b.station) || a.format.localeCompare(b.format));
  for (let i = 0; i < plan.length; i++) {
    for (let j = i + 1; j < plan.length; j++) {
      const a = plan[i];
      const b = plan[j];
      if (a && b && a.station === b.station && Math.abs(a.startUs - b.startUs) < DEMO_WINDOW_S * 1e6) {
        throw new RangeError(`demo plan: two windows of ${a.station} overlap (${new Date(a.startUs / 1000).toISOString()} and ${new Date(b.startUs / 1000).toISOString()})`);
      }
    }
  }
  return plan;
}

/** The events whose signal reaches into a station's window [startUs, startUs + 120 s). */
export function eventsInWindow(station: DemoStationCode, startUs: number): { event: DemoEvent; at: EventAtStation }[] {
  const st = demoStation(station);
  const endUs = startUs + DEMO_WINDOW_S * 1e6;
  return DEMO_EVENTS.map((event) => ({ event, at: eventAtStation(event, st) })).filter(
    // Coda lasts well under 60 s for these small events.
    ({ at }) => at.pArrivalUs < endUs && at.pArrivalUs + 60e6 > startUs,
  );
}

/** The station's noise history: how many days before the demo day it spans. */
export const HISTORY_DAYS = 6;
/** Routine noise windows per station in the history (4 a day over {@link HISTORY_DAYS} days; the score needs 20). */
export const HISTORY_WINDOWS_PER_STATION = 24;
/** Minutes between the history windows of neighbouring stations in a slot (no two stations' windows overlap). */
const HISTORY_STATION_STAGGER_MIN = 7;

/**
 * The stations' noise history: {@link HISTORY_WINDOWS_PER_STATION} routine 120 s windows per station on
 * the {@link HISTORY_DAYS} days before {@link DEMO_DAY}, without glitches or events. Slot k of a station
 * starts at k·24 h/28 into its day (so every hour of the day is represented: night, both rush hours,
 * the windy afternoons), plus a station stagger of 7 min and up to a minute of seeded jitter; the day
 * is (2k + station index) mod 7, so each day holds four windows of each station. Stations never
 * overlap each other: the history must not look like a network-wide event to the grouping.
 * Invented, for the demo.
 * @throws RangeError when two history windows overlap (the plan would contradict itself)
 */
export function planHistoryWindows(): PlannedWindow[] {
  const dayUs = 86_400e6;
  const firstDayUs = Date.parse(`${DEMO_DAY}T00:00:00Z`) * 1000 - HISTORY_DAYS * dayUs;
  const slotS = 86_400 / HISTORY_WINDOWS_PER_STATION;
  const plan: PlannedWindow[] = [];
  demoStations.forEach((st, s) => {
    const rng = prngFor(`history/${st.code}`);
    for (let k = 0; k < HISTORY_WINDOWS_PER_STATION; k++) {
      const day = (k + s) % HISTORY_DAYS;
      const offsetS = Math.floor(k * slotS + s * HISTORY_STATION_STAGGER_MIN * 60 + rng.uniform(0, 60));
      plan.push({ station: st.code, startUs: firstDayUs + day * dayUs + offsetS * 1e6, format: 'mseed', channels: DEMO_CHANNELS, reason: 'history' });
    }
  });
  plan.sort((a, b) => a.startUs - b.startUs || a.station.localeCompare(b.station));
  for (let i = 1; i < plan.length; i++) {
    const a = plan[i - 1];
    const b = plan[i];
    if (a && b && b.startUs - a.startUs < DEMO_WINDOW_S * 1e6) {
      throw new RangeError(`history plan: windows of ${a.station} and ${b.station} overlap (${new Date(a.startUs / 1000).toISOString()} and ${new Date(b.startUs / 1000).toISOString()})`);
    }
  }
  return plan;
}
