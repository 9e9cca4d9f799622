import { describe, expect, it } from 'vitest';
import { z } from 'zod';
import {
  allArrivals,
  directWave,
  firstArrival,
  firstArrivalTimeS,
  headWaves,
  interpolateTable,
  prepareVelocityModel,
  travelTimeTable,
} from '@server/seismo/travel-time';
import { DEFAULT_VELOCITY_MODEL, validateVelocityModel, type VelocityModel } from '@server/seismo/velocity-model';
import { readSeismoFixture } from './read-fixture';

const halfSpace: VelocityModel = { name: 'half-space', layers: [{ topKm: 0, vpKmS: 6, vsKmS: 3.5 }] };

describe('homogeneous half-space: T = r/v exactly (straight rays; common practice)', () => {
  const m = prepareVelocityModel(halfSpace);
  for (const [x, d] of [[0, 5], [3, 0], [12.5, 7], [80, 15], [250, 33], [0.001, 12]] as const) {
    it(`x = ${x} km, z = ${d} km: time, ∂T/∂x = x/(v r), ∂T/∂z = z/(v r), take-off angle`, () => {
      for (const [wave, v] of [['P', 6], ['S', 3.5]] as const) {
        const a = firstArrival(m, wave, x, d);
        const r = Math.hypot(x, d);
        expect(a.kind).toBe('direct');
        expect(a.phase).toBe(wave);
        expect(Math.abs(a.timeS - r / v)).toBeLessThan(1e-12 * Math.max(1, r));
        expect(Math.abs(a.dtdDistanceSPerKm - x / (v * r))).toBeLessThan(1e-9);
        if (d > 0) expect(Math.abs(a.dtdDepthSPerKm - d / (v * r))).toBeLessThan(1e-9);
        // Take-off from the downward vertical: an upgoing ray leaves at 180° − atan(x/z).
        expect(Math.abs(a.takeoffAngleDeg - (180 - (Math.atan2(x, d) * 180) / Math.PI))).toBeLessThan(1e-6);
        expect(headWaves(m, wave, x, d)).toEqual([]);
      }
    });
  }
});

describe('a layer over a half-space: textbook head-wave and crossover formulas (Shearer 2009 ch. 4; Lay & Wallace 1995 ch. 3; from memory, common practice)', () => {
  const h = 30;
  const v1 = 6;
  const v2 = 8;
  const model: VelocityModel = { name: 'layer over half-space', layers: [{ topKm: 0, vpKmS: v1, vsKmS: 3.5 }, { topKm: h, vpKmS: v2, vsKmS: 4.6 }] };
  const m = prepareVelocityModel(model);
  const eta = Math.sqrt(1 / v1 ** 2 - 1 / v2 ** 2);
  const sinIc = v1 / v2;
  const xCritical = 2 * h * Math.tan(Math.asin(sinIc));
  const xCrossover = 2 * h * Math.sqrt((v2 + v1) / (v2 - v1));

  it('surface source: t = x/v₂ + 2h·√(1/v₁² − 1/v₂²) beyond the critical distance 2h·tan(i_c)', () => {
    for (const x of [xCritical + 0.01, 100, 150, 300]) {
      const pn = headWaves(m, 'P', x, 0);
      expect(pn).toHaveLength(1);
      expect(pn[0]?.phase).toBe('Pn');
      expect(Math.abs((pn[0]?.timeS as number) - (x / v2 + 2 * h * eta))).toBeLessThan(1e-12);
      expect(pn[0]?.dtdDistanceSPerKm).toBeCloseTo(1 / v2, 14);
      expect(Math.abs((pn[0]?.takeoffAngleDeg as number) - (Math.asin(sinIc) * 180) / Math.PI)).toBeLessThan(1e-9);
    }
    // Before the critical distance the head wave does not exist.
    expect(headWaves(m, 'P', xCritical - 0.01, 0)).toEqual([]);
  });

  it('source at depth z in the layer: t = x/v₂ + (2h − z)·√(1/v₁² − 1/v₂²), ∂T/∂z = −√(1/v₁² − 1/v₂²)', () => {
    for (const d of [4, 12.5, 29]) {
      const x = 200;
      const pn = headWaves(m, 'P', x, d)[0];
      expect(pn?.phase).toBe('Pn');
      expect(Math.abs((pn?.timeS as number) - (x / v2 + (2 * h - d) * eta))).toBeLessThan(1e-12);
      expect(Math.abs((pn?.dtdDepthSPerKm as number) + eta)).toBeLessThan(1e-12);
    }
  });

  it(`crossover distance 2h·√((v₂ + v₁)/(v₂ − v₁)) = ${xCrossover.toFixed(2)} km: Pg first before it, Pn after`, () => {
    const before = firstArrival(m, 'P', xCrossover - 0.05, 0);
    const after = firstArrival(m, 'P', xCrossover + 0.05, 0);
    expect(before.phase).toBe('Pg');
    expect(after.phase).toBe('Pn');
    // At the crossover both times are equal: x/v₁ = x/v₂ + 2h·η.
    const atX = allArrivals(m, 'P', xCrossover, 0);
    expect(Math.abs((atX[0]?.timeS as number) - (atX[1]?.timeS as number))).toBeLessThan(1e-9);
    expect(Math.abs(xCrossover / v1 - (xCrossover / v2 + 2 * h * eta))).toBeLessThan(1e-9);
  });

  it('S uses Vs: Sg/Sn with the same formulas in the shear speeds', () => {
    const vs1 = 3.5;
    const vs2 = 4.6;
    const etaS = Math.sqrt(1 / vs1 ** 2 - 1 / vs2 ** 2);
    const sn = headWaves(m, 'S', 250, 10)[0];
    expect(sn?.phase).toBe('Sn');
    expect(Math.abs((sn?.timeS as number) - (250 / vs2 + (2 * h - 10) * etaS))).toBeLessThan(1e-12);
    const sg = directWave(m, 'S', 40, 10);
    expect(sg.phase).toBe('Sg');
    expect(Math.abs(sg.timeS - Math.hypot(40, 10) / vs1)).toBeLessThan(1e-12);
  });
});

const fixture = readSeismoFixture(
  'travel-times.json',
  z.object({
    source: z.string(),
    models: z.record(z.string(), z.array(z.object({ topKm: z.number(), vpKmS: z.number(), vsKmS: z.number() }))),
    cases: z.array(
      z.object({
        model: z.string(),
        wave: z.enum(['P', 'S']),
        depthKm: z.number(),
        distanceKm: z.number(),
        arrivals: z.array(z.object({ kind: z.enum(['direct', 'head']), refractor: z.number().nullable(), timeS: z.number() })),
      }),
    ),
  }),
);

describe(`every branch against an independent Fermat-principle minimisation (fixtures/seismo/travel-times.json: ${fixture.source})`, () => {
  for (const [name, layers] of Object.entries(fixture.models)) {
    it(`${name}: direct and head-wave times to 1e-7 s, the same head waves exist, the same first arrival (${fixture.cases.filter((c) => c.model === name).length} cases)`, () => {
      const m = prepareVelocityModel({ name, layers });
      let compared = 0;
      for (const c of fixture.cases.filter((k) => k.model === name)) {
        const got = allArrivals(m, c.wave, c.distanceKm, c.depthKm);
        const label = `${c.wave} x=${c.distanceKm} z=${c.depthKm}`;
        expect(got.map((a) => a.refractorIndex), label).toEqual(c.arrivals.map((a) => a.refractor));
        c.arrivals.forEach((ref, i) => {
          expect(Math.abs((got[i]?.timeS as number) - ref.timeS), `${label} ${ref.kind} ${ref.refractor ?? ''}`).toBeLessThan(1e-7);
          compared++;
        });
        const refFirst = Math.min(...c.arrivals.map((a) => a.timeS));
        expect(Math.abs(firstArrival(m, c.wave, c.distanceKm, c.depthKm).timeS - refFirst), label).toBeLessThan(1e-7);
        expect(Math.abs(firstArrivalTimeS(m, c.wave, c.distanceKm, c.depthKm) - refFirst), label).toBeLessThan(1e-7);
      }
      expect(compared).toBeGreaterThan(150);
    });
  }
});

describe('derivatives for Geiger’s method against central differences of the travel time', () => {
  const m = prepareVelocityModel(DEFAULT_VELOCITY_MODEL);
  it('∂T/∂x and ∂T/∂z of the first arrival, away from crossovers and interfaces, to 1e-5 s/km', () => {
    let checked = 0;
    for (const wave of ['P', 'S'] as const) {
      for (const d of [1.3, 7.7, 14, 24.2, 38]) {
        for (const x of [0.7, 9, 36, 88, 143, 271]) {
          const a = firstArrival(m, wave, x, d);
          const e = 1e-4;
          const same = (xx: number, zz: number): boolean => firstArrival(m, wave, xx, zz).phase === a.phase;
          if (!same(x - e, d) || !same(x + e, d) || !same(x, d - e) || !same(x, d + e)) continue;
          const dx = (firstArrivalTimeS(m, wave, x + e, d) - firstArrivalTimeS(m, wave, x - e, d)) / (2 * e);
          const dz = (firstArrivalTimeS(m, wave, x, d + e) - firstArrivalTimeS(m, wave, x, d - e)) / (2 * e);
          expect(Math.abs(a.dtdDistanceSPerKm - dx), `${wave} ${a.phase} x=${x} z=${d}`).toBeLessThan(1e-5);
          expect(Math.abs(a.dtdDepthSPerKm - dz), `${wave} ${a.phase} x=${x} z=${d}`).toBeLessThan(1e-5);
          checked++;
        }
      }
    }
    expect(checked).toBeGreaterThan(50);
  });

  it('phase names in the default model: Pg near, P_L1/P_L2 over the interfaces, Pn far; P from the mantle', () => {
    expect(firstArrival(m, 'P', 20, 10).phase).toBe('Pg');
    expect(firstArrival(m, 'P', 60, 0).phase).toBe('P_L1');
    expect(firstArrival(m, 'P', 300, 10).phase).toBe('Pn');
    expect(firstArrival(m, 'S', 300, 10).phase).toBe('Sn');
    expect(firstArrival(m, 'P', 100, 40).phase).toBe('P');
  });
});

describe('tables for the grid search', () => {
  const m = prepareVelocityModel(DEFAULT_VELOCITY_MODEL);
  it('hold the exact first-arrival time at the nodes and interpolate within 0.03 s at 1 km spacing', () => {
    const table = travelTimeTable(m, 'P', 6.5, 1, 301);
    for (let i = 0; i <= 300; i += 17) expect(table[i]).toBe(firstArrivalTimeS(m, 'P', i, 6.5));
    let worst = 0;
    for (let x = 0; x <= 300; x += 0.37) worst = Math.max(worst, Math.abs(interpolateTable(table, 1, x) - firstArrivalTimeS(m, 'P', x, 6.5)));
    expect(worst).toBeLessThan(0.03);
  });
  it('refuse a bad step or size', () => {
    expect(() => travelTimeTable(m, 'P', 5, 0, 10)).toThrow('step must be > 0 km');
    expect(() => travelTimeTable(m, 'P', 5, 1, 1)).toThrow('at least 2 distances');
  });
});

describe('bad input gets a plain error', () => {
  const m = prepareVelocityModel(DEFAULT_VELOCITY_MODEL);
  it('negative or non-finite distance and depth', () => {
    expect(() => firstArrival(m, 'P', -1, 5)).toThrow('distance must be a finite number ≥ 0 km, got -1');
    expect(() => firstArrival(m, 'P', Number.NaN, 5)).toThrow('distance must be a finite number');
    expect(() => firstArrival(m, 'P', 10, -0.5)).toThrow('no sources above the surface');
    expect(() => firstArrivalTimeS(m, 'S', 10, Number.POSITIVE_INFINITY)).toThrow('source depth must be a finite number');
  });
  it('model validation names the layer and the problem', () => {
    const bad = (layers: VelocityModel['layers']): (() => unknown) => () => validateVelocityModel({ name: 'x', layers });
    expect(bad([])).toThrow('there are no layers');
    expect(bad([{ topKm: 1, vpKmS: 6, vsKmS: 3.5 }])).toThrow('layer 1: the first layer must start at 0 km');
    expect(bad([{ topKm: 0, vpKmS: 6, vsKmS: 3.5 }, { topKm: 0, vpKmS: 7, vsKmS: 4 }])).toThrow('layer 2: top 0 km is not below');
    expect(bad([{ topKm: 0, vpKmS: 6, vsKmS: 6.5 }])).toThrow('Vs 6.5 km/s must be below Vp 6 km/s');
    expect(bad([{ topKm: 0, vpKmS: 6000, vsKmS: 3500 }])).toThrow('Vp must be in (0, 20] km/s');
    expect(bad([{ topKm: 0, vpKmS: Number.NaN, vsKmS: 3 }])).toThrow('vpKmS must be a finite number');
    expect(() => validateVelocityModel({ name: ' ', layers: [{ topKm: 0, vpKmS: 6, vsKmS: 3.5 }] })).toThrow('the name is empty');
  });
  it('the default model is valid, frozen and labelled as a placeholder', () => {
    expect(validateVelocityModel(DEFAULT_VELOCITY_MODEL)).toBe(DEFAULT_VELOCITY_MODEL);
    expect(Object.isFrozen(DEFAULT_VELOCITY_MODEL.layers)).toBe(true);
    expect(DEFAULT_VELOCITY_MODEL.isDefault).toBe(true);
    expect(DEFAULT_VELOCITY_MODEL.name).toMatch(/replace/);
  });
});
