import { describe, expect, it } from 'vitest';
import { z } from 'zod';
import { destinationPoint, greatCircleDistanceKm, toLocalKm, azimuthDeg } from '@server/seismo/geodesy';
import { K68_1D, K68_2D, confidenceEllipse68, locateEvent, type LocateResult, type LocatedOrigin } from '@server/seismo/locate';
import { cholesky, choleskyInverse, choleskySolve } from '@server/seismo/small-matrix';
import { DEFAULT_VELOCITY_MODEL, type VelocityModel } from '@server/seismo/velocity-model';
import { readSeismoFixture } from './read-fixture';
import { ringStations, seededNormal, synthesizePicks, type TrueHypocentre } from './synthetic';

// Test geometry (synthetic, used only as input): a network of ten stations around a centre.
const centre = { latitudeDeg: 46.2, longitudeDeg: 7.4 };
const network = ringStations(centre, [
  [5, 8], [40, 22], [77, 15], [110, 31], [150, 12], [185, 26], [220, 9], [255, 35], [290, 18], [330, 28],
]);
const sigma = { P: 0.05, S: 0.1 } as const;

function located(r: LocateResult): Extract<LocateResult, { ok: true }> {
  if (!r.ok) throw new Error(`expected a location, got a refusal: ${r.reason}`);
  return r;
}

function truthAt(azimuth: number, distanceKm: number, depthKm: number): TrueHypocentre {
  return { ...destinationPoint(centre, azimuth, distanceKm), depthKm, timeS: 1_773_480_413.25 };
}

/** True when the truth's epicentre lies inside the reported ellipse (centred on the estimate). */
function insideEllipse(o: LocatedOrigin, truth: TrueHypocentre): boolean {
  const d = toLocalKm(o, truth);
  const az = (o.uncertainty.ellipse.azimuthDeg * Math.PI) / 180;
  const along = d.eastKm * Math.sin(az) + d.northKm * Math.cos(az);
  const across = d.eastKm * Math.cos(az) - d.northKm * Math.sin(az);
  return (along / o.uncertainty.ellipse.semiMajorKm) ** 2 + (across / o.uncertainty.ellipse.semiMinorKm) ** 2 <= 1;
}

describe('noise-free picks from a known hypocentre are recovered (the issue: within 0.1 km and 0.01 s)', () => {
  const twoLayer: VelocityModel = { name: 'two-layer test model', layers: [{ topKm: 0, vpKmS: 6, vsKmS: 3.46 }, { topKm: 30, vpKmS: 8, vsKmS: 4.62 }] };
  const cases: Array<[string, TrueHypocentre, VelocityModel]> = [
    ['inside the network, 8.3 km deep, default model', truthAt(200, 6, 8.3), DEFAULT_VELOCITY_MODEL],
    ['near the edge, 2.1 km deep', truthAt(60, 25, 2.1), DEFAULT_VELOCITY_MODEL],
    ['lower crust, 24.6 km deep', truthAt(300, 12, 24.6), DEFAULT_VELOCITY_MODEL],
    ['two-layer model, 14 km deep', truthAt(120, 4, 14), twoLayer],
  ];
  for (const [label, truth, model] of cases) {
    it(label, () => {
      const picks = synthesizePicks(network, truth, model, ['P', 'S'], sigma);
      const r = located(locateEvent(network, picks, model));
      expect(r.origin.depthFixed).toBe(false);
      expect(greatCircleDistanceKm(r.origin, truth)).toBeLessThan(0.1);
      expect(Math.abs(r.origin.depthKm - truth.depthKm)).toBeLessThan(0.1);
      expect(Math.abs(r.origin.timeS - truth.timeS)).toBeLessThan(0.01);
      expect(r.origin.rmsS).toBeLessThan(1e-3);
      expect(r.origin.converged).toBe(true);
      expect(r.origin.usedPhaseCount).toBe(20);
      expect(r.origin.usedStationCount).toBe(10);
      for (const a of r.arrivals) expect(Math.abs(a.residualS)).toBeLessThan(1e-3);
    });
  }

  it('a regional event 120 km outside a wide network: Pn/Sn arrivals are used and named', () => {
    const wide = ringStations(centre, [[0, 40], [60, 90], [120, 60], [180, 110], [240, 75], [300, 130], [30, 150], [200, 20]]);
    const truth = { ...destinationPoint(centre, 95, 120), depthKm: 12, timeS: 1000 };
    const picks = synthesizePicks(wide, truth, DEFAULT_VELOCITY_MODEL, ['P', 'S'], sigma);
    const r = located(locateEvent(wide, picks, DEFAULT_VELOCITY_MODEL));
    expect(greatCircleDistanceKm(r.origin, truth)).toBeLessThan(0.1);
    expect(Math.abs(r.origin.timeS - truth.timeS)).toBeLessThan(0.01);
    const phases = new Set(r.arrivals.map((a) => a.modelPhase));
    expect(phases.has('Pn')).toBe(true);
    expect(phases.has('Sn')).toBe(true);
  });

  it('reports distance, azimuth, back-azimuth and weight of each arrival as the geodesy gives them', () => {
    const truth = truthAt(10, 10, 6);
    const picks = synthesizePicks(network, truth, DEFAULT_VELOCITY_MODEL, ['P', 'S'], sigma);
    const r = located(locateEvent(network, picks, DEFAULT_VELOCITY_MODEL));
    for (const a of r.arrivals) {
      const st = network.find((s) => s.code === a.stationCode);
      if (!st) throw new Error('unknown station in the arrivals');
      expect(a.distanceKm).toBeCloseTo(greatCircleDistanceKm(r.origin, st), 9);
      expect(a.hypocentralDistanceKm).toBeCloseTo(Math.hypot(a.distanceKm, r.origin.depthKm), 9);
      expect(a.azimuthDeg).toBeCloseTo(azimuthDeg(r.origin, st), 9);
      expect(a.backAzimuthDeg).toBeCloseTo(azimuthDeg(st, r.origin), 9);
      expect(a.weight).toBe(a.phase === 'P' ? 1 : 0.25);
      expect(a.pickId).toBe(`${a.stationCode}.${a.phase}`);
    }
    expect(r.origin.minimumDistanceKm).toBeCloseTo(Math.min(...r.arrivals.map((a) => a.distanceKm)), 9);
    expect(r.notes.some((n) => n.includes('default velocity model'))).toBe(true);
  });
});

describe('refusals with a reason (the issue: below 3 stations or 4 phases)', () => {
  const truth = truthAt(0, 0, 8);
  it('two stations, four phases', () => {
    const picks = synthesizePicks(network.slice(0, 2), truth, DEFAULT_VELOCITY_MODEL, ['P', 'S'], sigma);
    const r = locateEvent(network, picks, DEFAULT_VELOCITY_MODEL);
    expect(r).toEqual({ ok: false, code: 'too-few-stations', reason: 'a location needs picks from at least 3 stations; there are 2' });
  });
  it('three stations, three phases', () => {
    const picks = synthesizePicks(network.slice(0, 3), truth, DEFAULT_VELOCITY_MODEL, ['P'], sigma);
    const r = locateEvent(network, picks, DEFAULT_VELOCITY_MODEL);
    expect(r).toEqual({ ok: false, code: 'too-few-phases', reason: 'a location needs at least 4 picks (P and S); there are 3' });
  });
  it('three stations with four phases is enough', () => {
    const picks = synthesizePicks(network.slice(0, 3), truth, DEFAULT_VELOCITY_MODEL, ['P', 'S'], sigma).filter((p) => p.phase === 'P' || p.stationCode === 'T01');
    expect(picks).toHaveLength(4);
    expect(locateEvent(network, picks, DEFAULT_VELOCITY_MODEL).ok).toBe(true);
  });
});

describe('the depth is fixed, and said so, when the picks do not resolve it', () => {
  it('stations 150–250 km away with P only (Pn everywhere: depth trades with origin time)', () => {
    const far = ringStations(centre, [[0, 150], [70, 190], [140, 230], [210, 170], [280, 250], [320, 205]]);
    const truth = truthAt(0, 0, 12);
    const picks = synthesizePicks(far, truth, DEFAULT_VELOCITY_MODEL, ['P'], sigma);
    const r = located(locateEvent(far, picks, DEFAULT_VELOCITY_MODEL));
    expect(r.origin.depthFixed).toBe(true);
    expect(r.origin.depthKm).toBe(10);
    expect(r.origin.depthFixedReason).toBe('the picks cannot separate depth from origin time; depth fixed at the default 10 km');
    expect(r.arrivals.every((a) => a.modelPhase === 'Pn')).toBe(true);
    // The epicentre is still found: the trade-off is between depth and origin time only.
    expect(greatCircleDistanceKm(r.origin, truth)).toBeLessThan(0.1);
    expect(r.origin.uncertainty.depthKm68).toBeNull();
    expect(r.notes).toContain(r.origin.depthFixedReason);
  });
  it('fixed by the caller: kept at that depth, said so, no depth uncertainty', () => {
    const truth = truthAt(45, 5, 7);
    const picks = synthesizePicks(network, truth, DEFAULT_VELOCITY_MODEL, ['P', 'S'], sigma);
    const r = located(locateEvent(network, picks, DEFAULT_VELOCITY_MODEL, { fixedDepthKm: 7 }));
    expect(r.origin.depthFixed).toBe(true);
    expect(r.origin.depthKm).toBe(7);
    expect(r.origin.depthFixedReason).toBe('depth fixed at 7 km by the caller');
    expect(greatCircleDistanceKm(r.origin, truth)).toBeLessThan(0.1);
    expect(r.origin.uncertainty.depthKm68).toBeNull();
  });
  it('a surface source (a blast at 0 km) is reported at the surface', () => {
    const truth = truthAt(100, 9, 0);
    const picks = synthesizePicks(network, truth, DEFAULT_VELOCITY_MODEL, ['P', 'S'], sigma);
    const r = located(locateEvent(network, picks, DEFAULT_VELOCITY_MODEL));
    expect(r.origin.depthKm).toBe(0);
    expect(r.origin.depthFixed).toBe(true);
    expect(r.origin.depthFixedReason).toMatch(/^the free-depth solution went to the surface/);
    expect(greatCircleDistanceKm(r.origin, truth)).toBeLessThan(0.1);
  });
  it('a source 0.3 km deep: ∂T/∂z → 0 near the surface, so the linearised depth uncertainty is large, but the default depth fits far worse: the free depth is kept, fixed, and said so', () => {
    const truth = truthAt(100, 9, 0.3);
    const picks = synthesizePicks(network, truth, DEFAULT_VELOCITY_MODEL, ['P', 'S'], sigma);
    const r = located(locateEvent(network, picks, DEFAULT_VELOCITY_MODEL));
    expect(r.origin.depthFixed).toBe(true);
    expect(Math.abs(r.origin.depthKm - 0.3)).toBeLessThan(0.1);
    expect(r.origin.depthFixedReason).toMatch(/^depth not resolved \(68 % uncertainty [0-9.]+ km > 5 km\); depth fixed at the free solution's 0.30 km/);
    expect(greatCircleDistanceKm(r.origin, truth)).toBeLessThan(0.1);
  });
});

describe('azimuthal gap in a location (common practice)', () => {
  it('stations all round: gap below 90°; stations on one side: above 180° with a note', () => {
    const truth = truthAt(0, 0, 8);
    const all = located(locateEvent(network, synthesizePicks(network, truth, DEFAULT_VELOCITY_MODEL, ['P', 'S'], sigma), DEFAULT_VELOCITY_MODEL));
    expect(all.origin.azimuthalGapDeg).toBeLessThan(90);
    expect(all.notes.some((n) => n.startsWith('azimuthal gap'))).toBe(false);
    const east = ringStations(truth, [[60, 20], [80, 35], [100, 25], [120, 40], [90, 50]]);
    const oneSided = located(locateEvent(east, synthesizePicks(east, truth, DEFAULT_VELOCITY_MODEL, ['P', 'S'], sigma), DEFAULT_VELOCITY_MODEL));
    // Seen from the true epicentre the stations span 60°…120°: a gap of about 300°.
    expect(Math.abs(oneSided.origin.azimuthalGapDeg - 300)).toBeLessThan(2);
    expect(oneSided.notes.some((n) => n.startsWith('azimuthal gap 30'))).toBe(true);
  });
});

const quantiles = readSeismoFixture('quantiles.json', z.object({ source: z.string(), normalPpf084: z.number(), chi2Ppf068Dof2: z.number(), chi2Ppf068Dof1: z.number() }));

describe(`68 % confidence constants against ${quantiles.source}`, () => {
  it('√χ²₂(0.68) for the ellipse and Φ⁻¹(0.84) = √χ²₁(0.68) for depth and time', () => {
    expect(K68_2D ** 2).toBeCloseTo(quantiles.chi2Ppf068Dof2, 12);
    expect(K68_1D).toBeCloseTo(quantiles.normalPpf084, 14);
    expect(K68_1D ** 2).toBeCloseTo(quantiles.chi2Ppf068Dof1, 12);
  });
  it('ellipse axes and azimuth of hand-worked covariances', () => {
    const east = confidenceEllipse68(4, 0, 1);
    expect(east.semiMajorKm).toBeCloseTo(2 * K68_2D, 12);
    expect(east.semiMinorKm).toBeCloseTo(K68_2D, 12);
    expect(east.azimuthDeg).toBeCloseTo(90, 12);
    const north = confidenceEllipse68(1, 0, 9);
    expect(north.semiMajorKm).toBeCloseTo(3 * K68_2D, 12);
    expect(north.azimuthDeg).toBeCloseTo(0, 12);
    // Covariance [[2, 1], [1, 2]]: eigenvalues 3 and 1, major axis along (1, 1) east-north = azimuth 45°.
    const ne = confidenceEllipse68(2, 1, 2);
    expect(ne.semiMajorKm).toBeCloseTo(Math.sqrt(3) * K68_2D, 12);
    expect(ne.semiMinorKm).toBeCloseTo(K68_2D, 12);
    expect(ne.azimuthDeg).toBeCloseTo(45, 12);
    expect(confidenceEllipse68(2, -1, 2).azimuthDeg).toBeCloseTo(135, 12);
  });
});

describe('the 68 % ellipse covers the truth about 68 % of the time (common practice check; 400 seeded trials)', () => {
  it('Gaussian pick noise σ_P = 0.05 s, σ_S = 0.10 s: epicentre inside the ellipse, depth and time inside their 68 % half-widths, each in 0.62…0.74', () => {
    const trials = 400;
    const normal = seededNormal(20260314);
    let inEllipse = 0;
    let inDepth = 0;
    let inTime = 0;
    let free = 0;
    for (let i = 0; i < trials; i++) {
      const truth = truthAt((i * 47) % 360, 3 + (i % 7) * 2, 5.5 + (i % 5) * 2.5);
      const picks = synthesizePicks(network, truth, DEFAULT_VELOCITY_MODEL, ['P', 'S'], sigma, normal);
      const r = located(locateEvent(network, picks, DEFAULT_VELOCITY_MODEL));
      if (insideEllipse(r.origin, truth)) inEllipse++;
      if (Math.abs(r.origin.timeS - truth.timeS) <= r.origin.uncertainty.timeS68) inTime++;
      if (r.origin.uncertainty.depthKm68 !== null) {
        free++;
        if (Math.abs(r.origin.depthKm - truth.depthKm) <= r.origin.uncertainty.depthKm68) inDepth++;
      }
    }
    // Binomial standard deviation at n = 400, p = 0.68: 0.023; the bounds are about ±2.6 of them.
    expect(free).toBe(trials);
    expect(inEllipse / trials).toBeGreaterThan(0.62);
    expect(inEllipse / trials).toBeLessThan(0.74);
    expect(inDepth / trials).toBeGreaterThan(0.62);
    expect(inDepth / trials).toBeLessThan(0.74);
    expect(inTime / trials).toBeGreaterThan(0.62);
    expect(inTime / trials).toBeLessThan(0.74);
  }, 240_000);
});

describe('bad input gets a plain error; inputs are not changed', () => {
  const truth = truthAt(0, 0, 8);
  const picks = synthesizePicks(network, truth, DEFAULT_VELOCITY_MODEL, ['P', 'S'], sigma);
  it('unknown station, duplicate phase, bad uncertainty or time, bad options', () => {
    expect(() => locateEvent(network.slice(1), picks, DEFAULT_VELOCITY_MODEL)).toThrow('pick T01.P is at station T01, which has no position');
    expect(() => locateEvent(network, [...picks, { ...(picks[0] as (typeof picks)[number]), id: 'again' }], DEFAULT_VELOCITY_MODEL)).toThrow('two P picks at station T01; keep one');
    expect(() => locateEvent(network, picks.map((p, i) => (i === 3 ? { ...p, uncertaintyS: 0 } : p)), DEFAULT_VELOCITY_MODEL)).toThrow('pick T02.S needs an uncertainty > 0 s, got 0');
    expect(() => locateEvent(network, picks.map((p, i) => (i === 2 ? { ...p, timeS: Number.NaN } : p)), DEFAULT_VELOCITY_MODEL)).toThrow('pick T02.P has no finite time');
    expect(() => locateEvent([...network, { code: 'BAD', latitudeDeg: 95, longitudeDeg: 0 }], picks, DEFAULT_VELOCITY_MODEL)).toThrow('station BAD: latitude must be between -90 and 90');
    expect(() => locateEvent(network, picks, DEFAULT_VELOCITY_MODEL, { maxDepthKm: -5 })).toThrow('maxDepthKm must be a finite number > 0, got -5');
    expect(() => locateEvent(network, picks, { name: 'bad', layers: [] })).toThrow('velocity model: there are no layers');
  });
  it('deep-frozen inputs locate and stay equal to their copies', () => {
    const deepFreeze = <T>(v: T): T => {
      if (v && typeof v === 'object') {
        for (const k of Object.keys(v)) deepFreeze((v as Record<string, unknown>)[k]);
        Object.freeze(v);
      }
      return v;
    };
    const st = structuredClone(network);
    const pk = structuredClone(picks);
    const before = JSON.stringify([st, pk]);
    deepFreeze(st);
    deepFreeze(pk);
    const r = located(locateEvent(st, pk, DEFAULT_VELOCITY_MODEL));
    expect(r.origin.usedPhaseCount).toBe(20);
    expect(JSON.stringify([st, pk])).toBe(before);
  });
});

describe('small symmetric solves (Golub & Van Loan, Cholesky; hand-worked)', () => {
  it('A = [[4, 2], [2, 3]]: L = [[2, 0], [1, √2]], A⁻¹ = [[3, −2], [−2, 4]]/8, solve A x = (2, 1) → (0.5, 0)', () => {
    const a = Float64Array.from([4, 2, 2, 3]);
    const l = cholesky(a, 2);
    expect(l && Array.from(l)).toEqual([2, 0, 1, Math.SQRT2]);
    if (!l) return;
    const inv = Array.from(choleskyInverse(l, 2));
    [3 / 8, -2 / 8, -2 / 8, 4 / 8].forEach((v, i) => expect(inv[i]).toBeCloseTo(v, 14));
    const x = Array.from(choleskySolve(l, 2, Float64Array.from([2, 1])));
    expect(x[0]).toBeCloseTo(0.5, 14);
    expect(x[1]).toBeCloseTo(0, 14);
    expect(Array.from(a)).toEqual([4, 2, 2, 3]);
  });
  it('a singular matrix has no factor; a wrong size throws', () => {
    expect(cholesky(Float64Array.from([1, 1, 1, 1]), 2)).toBeNull();
    expect(() => cholesky(Float64Array.from([1, 2, 3]), 2)).toThrow('expected 2×2 = 4 values, got 3');
  });
});
