import { describe, expect, it } from 'vitest';
import { z } from 'zod';
import {
  EARTH_RADIUS_KM,
  azimuthDeg,
  azimuthalGapDeg,
  backAzimuthDeg,
  centroid,
  destinationPoint,
  fromLocalKm,
  greatCircleDistanceKm,
  toLocalKm,
} from '@server/seismo/geodesy';
import { readSeismoFixture } from './read-fixture';

const pt = (latitudeDeg: number, longitudeDeg: number): { latitudeDeg: number; longitudeDeg: number } => ({ latitudeDeg, longitudeDeg });

const fixture = readSeismoFixture(
  'geodesy.json',
  z.object({
    source: z.string(),
    pairs: z.array(z.object({ from: z.tuple([z.number(), z.number()]), to: z.tuple([z.number(), z.number()]), distanceKm: z.number(), azimuthDeg: z.number(), backAzimuthDeg: z.number() })),
    destinations: z.array(z.object({ from: z.tuple([z.number(), z.number()]), azimuthDeg: z.number(), distanceKm: z.number(), to: z.tuple([z.number(), z.number()]) })),
  }),
);

const angleDiff = (a: number, b: number): number => Math.abs(((a - b + 540) % 360) - 180);

describe('sphere R = 6371 km: hand-worked cases (spherical geometry)', () => {
  it('one degree of arc along the equator and along a meridian is 2π·6371/360 = 111.19493 km', () => {
    expect(EARTH_RADIUS_KM).toBe(6371);
    expect(greatCircleDistanceKm(pt(0, 0), pt(0, 1))).toBeCloseTo(111.19492664, 7);
    expect(greatCircleDistanceKm(pt(10, 20), pt(11, 20))).toBeCloseTo(111.19492664, 7);
    // Quarter of a great circle, pole to equator; and antipodes (half the circumference).
    expect(greatCircleDistanceKm(pt(90, 0), pt(0, 123))).toBeCloseTo((Math.PI / 2) * 6371, 7);
    expect(greatCircleDistanceKm(pt(0, 0), pt(0, 180))).toBeCloseTo(Math.PI * 6371, 7);
    expect(greatCircleDistanceKm(pt(12, 34), pt(12, 34))).toBe(0);
  });
  it('azimuths of the four cardinal directions from the equator', () => {
    expect(azimuthDeg(pt(0, 0), pt(0, 1))).toBeCloseTo(90, 12);
    expect(azimuthDeg(pt(0, 0), pt(1, 0))).toBeCloseTo(0, 12);
    expect(azimuthDeg(pt(0, 0), pt(0, -1))).toBeCloseTo(270, 12);
    expect(azimuthDeg(pt(0, 0), pt(-1, 0))).toBeCloseTo(180, 12);
  });
  it('a short hop keeps full precision (no cancellation at metre scale)', () => {
    // 0.00001° of latitude = 1.1119 m (to 1e-10 km: 45.00001 is not exact in binary).
    expect(greatCircleDistanceKm(pt(45, 7), pt(45.00001, 7))).toBeCloseTo(0.0011119492664, 10);
  });
});

describe(`against 3-D vector algebra (fixtures/seismo/geodesy.json: ${fixture.source})`, () => {
  for (const p of fixture.pairs) {
    it(`(${p.from.join(', ')}) → (${p.to.join(', ')}): distance to 1e-8 km, azimuth and back-azimuth to 1e-8°`, () => {
      const a = pt(...p.from);
      const b = pt(...p.to);
      expect(Math.abs(greatCircleDistanceKm(a, b) - p.distanceKm)).toBeLessThan(1e-8);
      expect(angleDiff(azimuthDeg(a, b), p.azimuthDeg)).toBeLessThan(1e-8);
      expect(angleDiff(backAzimuthDeg(a, b), p.backAzimuthDeg)).toBeLessThan(1e-8);
    });
  }
  for (const d of fixture.destinations) {
    it(`destination from (${d.from.join(', ')}) at ${d.azimuthDeg}° and ${d.distanceKm} km`, () => {
      const got = destinationPoint(pt(...d.from), d.azimuthDeg, d.distanceKm);
      expect(Math.abs(got.latitudeDeg - d.to[0])).toBeLessThan(1e-10);
      expect(angleDiff(got.longitudeDeg, d.to[1])).toBeLessThan(1e-10);
    });
  }
});

describe('local azimuthal-equidistant plane', () => {
  const centre = pt(46.3, 8.1);
  it('is exact from the centre and round-trips', () => {
    for (const [e, n] of [[0, 0], [10, 0], [0, -25], [-80.5, 33.3], [150, 150]] as const) {
      const g = fromLocalKm(centre, { eastKm: e, northKm: n });
      expect(greatCircleDistanceKm(centre, g)).toBeCloseTo(Math.hypot(e, n), 9);
      const back = toLocalKm(centre, g);
      expect(Math.abs(back.eastKm - e)).toBeLessThan(1e-8);
      expect(Math.abs(back.northKm - n)).toBeLessThan(1e-8);
    }
  });
  it('differs from the great circle between two off-centre points by about (Δ/R)² only', () => {
    const a = fromLocalKm(centre, { eastKm: 100, northKm: 0 });
    const b = fromLocalKm(centre, { eastKm: 0, northKm: 100 });
    const rel = Math.abs(greatCircleDistanceKm(a, b) - Math.hypot(100, 100)) / Math.hypot(100, 100);
    expect(rel).toBeLessThan(1e-3);
  });
  it('centroid of symmetric points is their centre', () => {
    const pts = [0, 90, 180, 270].map((az) => destinationPoint(centre, az, 40));
    const c = centroid(pts);
    expect(greatCircleDistanceKm(c, centre)).toBeLessThan(0.2);
    expect(() => centroid([])).toThrow('no points');
    expect(() => centroid([pt(0, 0), pt(0, 180)])).toThrow('cancel out');
  });
});

describe('azimuthal gap: hand-worked geometry (common practice)', () => {
  it('stations all round: the widest step', () => {
    expect(azimuthalGapDeg([0, 90, 180, 270])).toBe(90);
    expect(azimuthalGapDeg([10, 100, 200, 300])).toBe(100);
  });
  it('stations on one side: 360 minus their spread, across north too', () => {
    expect(azimuthalGapDeg([0, 30, 60])).toBe(300);
    expect(azimuthalGapDeg([350, 10, 20])).toBe(330);
    expect(azimuthalGapDeg([-10, 370])).toBe(340);
  });
  it('one station, or none, is a full circle', () => {
    expect(azimuthalGapDeg([123])).toBe(360);
    expect(azimuthalGapDeg([45, 45])).toBe(360);
    expect(azimuthalGapDeg([])).toBe(360);
  });
  it('refuses a non-finite azimuth', () => {
    expect(() => azimuthalGapDeg([1, Number.NaN])).toThrow('azimuth must be finite');
  });
});

describe('bad coordinates get a plain error', () => {
  it('latitude out of range, non-finite longitude, non-finite distance', () => {
    expect(() => greatCircleDistanceKm(pt(91, 0), pt(0, 0))).toThrow('from: latitude must be between -90 and 90 degrees, got 91');
    expect(() => azimuthDeg(pt(0, 0), pt(0, Number.NaN))).toThrow('to: longitude must be a finite number');
    expect(() => destinationPoint(pt(0, 0), 10, Number.POSITIVE_INFINITY)).toThrow('distance must be a finite number of km');
  });
  it('longitudes wrap into (−180, 180] across the antimeridian', () => {
    const p = destinationPoint(pt(0, 179.9), 90, 50);
    expect(p.longitudeDeg).toBeLessThan(-179);
  });
});
