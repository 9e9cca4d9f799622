import { describe, expect, it } from 'vitest';
import { decodeWaveform } from '@server/formats/decode';
import { automaticPicks, automaticPicksInWindow } from '@server/seismo/auto-picks';
import { automaticPicksForStreams, consistentPTimes, maxPSlownessSKm, predictedPWindow, vpVsRatio, wadatiOriginTimeUs, type StationPTime } from '@server/seismo/event-chain';
import { greatCircleDistanceKm } from '@server/seismo/geodesy';
import { DEFAULT_VELOCITY_MODEL } from '@server/seismo/velocity-model';
import { defaultProcessingProfile } from '@shared/schemas/processing-profile';
import { ringStations, seededNormal } from './synthetic';
import { SYNTH_SENSITIVITY, stationMiniSeed, syntheticEvent } from './synthetic-waveforms';

// Half-space P and S speeds (common practice upper-crust values, from memory).
const VP = 6.0;
const VS = 3.46;
const halfSpace = { name: 'half-space (test)', layers: [{ topKm: 0, vpKmS: VP, vsKmS: VS }] };
const centre = { latitudeDeg: 46.25, longitudeDeg: 11.08 };
const stations = ringStations(centre, [[20, 6], [100, 9], [200, 7], [290, 11], [340, 4]]);

/**
 * Straight-ray half-space arrival time t = t0 + √(Δ² + h²)/v (common practice), µs since the epoch.
 */
function halfSpaceUs(t0S: number, st: { latitudeDeg: number; longitudeDeg: number }, hypo: { latitudeDeg: number; longitudeDeg: number; depthKm: number }, v: number): number {
  return Math.round((t0S + Math.hypot(greatCircleDistanceKm(hypo, st), hypo.depthKm) / v) * 1e6);
}

describe('travel-time bound of P picks (|T_i − T_j| ≤ Δ_ij / min Vp)', () => {
  it('the largest P slowness of a layered model is 1 / its slowest P speed (Snell: p = sin i / v ≤ 1/v)', () => {
    expect(maxPSlownessSKm(halfSpace)).toBeCloseTo(1 / VP, 12);
    expect(maxPSlownessSKm(DEFAULT_VELOCITY_MODEL)).toBeCloseTo(1 / Math.min(...DEFAULT_VELOCITY_MODEL.layers.map((l) => l.vpKmS)), 12);
  });

  it('noise-free half-space P times of 200 seeded hypocentres all fit together, with no tolerance', () => {
    const normal = seededNormal(11);
    for (let k = 0; k < 200; k++) {
      const hypo = { latitudeDeg: centre.latitudeDeg + 0.3 * normal(), longitudeDeg: centre.longitudeDeg + 0.3 * normal(), depthKm: Math.abs(8 * normal()) };
      const times: StationPTime[] = stations.map((s) => ({ key: s.code, ...s, timeUs: halfSpaceUs(1000, s, hypo, VP), uncertaintyS: 0 }));
      // 1 µs of rounding per time is the only allowance.
      expect(consistentPTimes(times, 1 / VP, 2e-6)).toHaveLength(stations.length);
      for (const t of times) {
        const w = predictedPWindow(t, times.filter((o) => o !== t), 1 / VP, 2e-6);
        expect(w, `window of ${t.key}`).not.toBeNull();
        expect(t.timeUs).toBeGreaterThanOrEqual(w?.fromUs ?? Infinity);
        expect(t.timeUs).toBeLessThanOrEqual(w?.toUs ?? -Infinity);
      }
    }
  });

  it('a P taken 3 s early on a noise burst is left out, and the span the others allow holds the true P but not the stray one', () => {
    const hypo = { latitudeDeg: 46.27, longitudeDeg: 11.1, depthKm: 0.02 };
    const truth = stations.map((s) => ({ key: s.code, ...s, timeUs: halfSpaceUs(5000, s, hypo, VP), uncertaintyS: 0.05 }));
    const stray = truth.map((t, i) => (i === 2 ? { ...t, timeUs: t.timeUs - 3e6 } : t));
    const kept = consistentPTimes(stray, 1 / VP, 0.3);
    expect(kept.map((t) => t.key)).toEqual(truth.filter((_, i) => i !== 2).map((t) => t.key));
    const w = predictedPWindow(stations[2] as (typeof stations)[number], kept, 1 / VP, 0.3);
    expect(w).not.toBeNull();
    const trueP = (truth[2] as StationPTime).timeUs;
    expect(trueP).toBeGreaterThanOrEqual(w?.fromUs ?? Infinity);
    expect(trueP).toBeLessThanOrEqual(w?.toUs ?? -Infinity);
    expect((stray[2] as StationPTime).timeUs).toBeLessThan(w?.fromUs ?? -Infinity);
  });

  it('a fixed (anchor) time is never left out; two stations that contradict only each other are both left out', () => {
    const a: StationPTime = { key: 'A', ...centre, timeUs: 0, uncertaintyS: 0.05 };
    const b: StationPTime = { key: 'B', latitudeDeg: centre.latitudeDeg + 0.01, longitudeDeg: centre.longitudeDeg, timeUs: 5e6, uncertaintyS: 0.05 };
    expect(consistentPTimes([a, b], 1 / VP, 0.3)).toEqual([]);
    expect(consistentPTimes([{ ...a, fixed: true }, b], 1 / VP, 0.3).map((t) => t.key)).toEqual(['A']);
  });
});

describe('Wadati relation (Wadati 1933): t_S − t_P = (Vp/Vs − 1)(t_P − t_0)', () => {
  it('gives back the origin time from half-space P and S times at any distance and depth', () => {
    const hypo = { latitudeDeg: 46.26, longitudeDeg: 11.07, depthKm: 5 };
    for (const s of stations) {
      const tp = halfSpaceUs(2000, s, hypo, VP);
      const ts = halfSpaceUs(2000, s, hypo, VS);
      expect(Math.abs(wadatiOriginTimeUs(tp, ts, VP / VS) - 2000e6)).toBeLessThan(5);
    }
    expect(vpVsRatio(halfSpace)).toBeCloseTo(VP / VS, 12);
  });
});

describe('picking inside the span the other stations allow', () => {
  const truth = { latitudeDeg: 46.255, longitudeDeg: 11.09, depthKm: 5, timeS: 1_773_458_242.35 };
  const synth = syntheticEvent(stations, truth, halfSpace, 21);
  // A loud 8 Hz burst (3e-5 m/s, ten times the P wavelet; a passing truck, invented) from 7 s to 4 s
  // before the P of the third station.
  const noisy = synth.map((st, i) => {
    if (i !== 2) return st;
    const z = st.channels[0];
    if (!z) return st;
    const counts = Int32Array.from(z.counts);
    const from = Math.round(((st.pTimeUs - 7e6 - z.startTimeUs) * 100) / 1e6);
    for (let k = 0; k < 300; k++) counts[from + k] = (counts[from + k] as number) + Math.round(3e-5 * Math.sin((2 * Math.PI * 8 * k) / 100) * Math.sin((Math.PI * k) / 300) * SYNTH_SENSITIVITY);
    return { ...st, channels: [{ ...z, counts }, ...st.channels.slice(1)] };
  });
  const streams = noisy.flatMap((st) => decodeWaveform(stationMiniSeed(st)));
  const third = noisy[2] as (typeof noisy)[number];
  const chainStations = stations.map((s) => ({ network: 'XX', code: s.code, latitudeDeg: s.latitudeDeg, longitudeDeg: s.longitudeDeg }));

  it('on its own, the station picks the burst (the case the span is for)', () => {
    const p = automaticPicks(streams.filter((s) => s.station === third.code), defaultProcessingProfile).find((x) => x.phase === 'P');
    expect(Math.abs(((p?.timeUs ?? 0) - third.pTimeUs) / 1e6)).toBeGreaterThan(3);
  });

  it('inside a span around the true P, the window picker finds the P within 0.05 s and the S after it', () => {
    const got = automaticPicksInWindow(streams.filter((s) => s.station === third.code), defaultProcessingProfile, { fromUs: third.pTimeUs - 1.5e6, toUs: third.pTimeUs + 0.5e6 });
    const p = got?.picks.find((x) => x.phase === 'P');
    const s = got?.picks.find((x) => x.phase === 'S');
    expect(Math.abs(((p?.timeUs ?? 0) - third.pTimeUs) / 1e6)).toBeLessThan(0.05);
    expect(Math.abs(((s?.timeUs ?? 0) - third.sTimeUs) / 1e6)).toBeLessThan(0.1);
    expect(got?.snr).toBeGreaterThan(2);
  });

  it('a span with no onset in it gives no pick', () => {
    expect(automaticPicksInWindow(streams.filter((s) => s.station === third.code), defaultProcessingProfile, { fromUs: third.pTimeUs - 20e6, toUs: third.pTimeUs - 15e6 })).toBeNull();
  });

  it('with station positions and the model, every station P is within 0.05 s of the synthetic onset (the burst station picked again)', () => {
    const picks = automaticPicksForStreams(streams, defaultProcessingProfile, undefined, { geometry: { stations: chainStations, model: halfSpace } });
    for (const st of noisy) {
      const p = picks.find((x) => x.phase === 'P' && x.streamId.startsWith(`XX.${st.code}.`));
      expect(Math.abs(((p?.timeUs ?? 0) - st.pTimeUs) / 1e6), `${st.code} P`).toBeLessThan(0.05);
      const s = picks.find((x) => x.phase === 'S' && x.streamId.startsWith(`XX.${st.code}.`));
      if (s) expect(Math.abs((s.timeUs - st.sTimeUs) / 1e6), `${st.code} S`).toBeLessThan(0.15);
    }
    expect(picks.find((x) => x.phase === 'P' && x.streamId.startsWith(`XX.${third.code}.`))?.method).toMatch(/inside the span/);
  });
});
