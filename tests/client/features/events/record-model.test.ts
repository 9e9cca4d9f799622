import { describe, expect, it } from 'vitest';
import { componentOf, epochToIso, isoToEpoch, orderStations, rowScales, showsChannel, stepUncertainty } from '@client/features/events/lib/record-model';
import { ellipseRing, niceScaleKm } from '@client/features/events/lib/map-geometry';

describe('record section model', () => {
  it('ISO 8601 times with microseconds round-trip through epoch seconds (ISO 8601; Date.parse keeps only ms)', () => {
    const iso = '2026-03-10T04:12:35.123456Z';
    expect(epochToIso(isoToEpoch(iso))).toBe(iso);
    expect(isoToEpoch('1970-01-01T00:00:01Z')).toBe(1);
    expect(epochToIso(0.0000005)).toBe('1970-01-01T00:00:00.000001Z');
    expect(() => isoToEpoch('10/03/2026')).toThrow(RangeError);
  });

  it('reads components from SEED channel codes (orientation Z, N/1, E/2; FDSN SEED manual appendix A)', () => {
    expect(['XX.KV01.00.HHZ', 'XX.KV01.00.HHN', 'XX.KV01.00.HH1', 'XX.KV01.00.HHE', 'XX.KV01.00.HH2', 'XX.KV01.00.LDO'].map(componentOf)).toEqual(['Z', 'N', 'N', 'E', 'E', '?']);
    expect(showsChannel('Z', 'XX.KV01.00.HHN')).toBe(false);
    expect(showsChannel('NE', 'XX.KV01.00.HHN')).toBe(true);
    expect(showsChannel('ZNE', 'XX.KV01.00.HHZ')).toBe(true);
  });

  it('orders by distance when every station has one, else by first arrival; ties by code', () => {
    const st = [
      { station: 'XX.B', distanceKm: 5, firstArrival: 30 },
      { station: 'XX.A', distanceKm: 12, firstArrival: 10 },
      { station: 'XX.C', distanceKm: 5, firstArrival: 20 },
    ];
    expect(orderStations(st, 'distance').map((s) => s.station)).toEqual(['XX.B', 'XX.C', 'XX.A']);
    expect(orderStations(st, 'arrival').map((s) => s.station)).toEqual(['XX.A', 'XX.C', 'XX.B']);
    expect(orderStations([...st, { station: 'XX.D', distanceKm: null, firstArrival: 1 }], 'distance').map((s) => s.station)).toEqual(['XX.D', 'XX.A', 'XX.C', 'XX.B']);
  });

  it('per-trace normalisation fills each row; relative amplitude keeps the ratio between traces of one unit', () => {
    const t = [
      { peak: 2, units: 'm/s' },
      { peak: 8, units: 'm/s' },
      { peak: 100, units: 'counts' },
      { peak: 0, units: 'm/s' },
    ];
    const own = rowScales(t, 'trace');
    own.forEach((f, i) => expect(f * (t[i]?.peak ?? 0)).toBeCloseTo(i === 3 ? 0 : 0.45, 12));
    const rel = rowScales(t, 'relative');
    expect((rel[0] as number) * 2).toBeCloseTo(0.45 / 4, 12);
    expect((rel[1] as number) * 8).toBeCloseTo(0.45, 12);
    expect((rel[2] as number) * 100).toBeCloseTo(0.45, 12);
  });

  it('uncertainty keys step through the list and stop at its ends', () => {
    expect(stepUncertainty(0.05, 1)).toBe(0.1);
    expect(stepUncertainty(0.05, -1)).toBe(0.02);
    expect(stepUncertainty(0.07, 1)).toBe(0.1);
    expect(stepUncertainty(0.01, -1)).toBe(0.01);
    expect(stepUncertainty(2, 1)).toBe(2);
  });
});

/** Great-circle distance by the haversine formula (Sinnott 1984, Sky & Telescope 68:159), km on a 6371 km sphere. */
function haversineKm(lat1: number, lon1: number, lat2: number, lon2: number): number {
  const r = Math.PI / 180;
  const a = Math.sin(((lat2 - lat1) * r) / 2) ** 2 + Math.cos(lat1 * r) * Math.cos(lat2 * r) * Math.sin(((lon2 - lon1) * r) / 2) ** 2;
  return 2 * 6371 * Math.asin(Math.sqrt(a));
}

describe('map geometry', () => {
  it('the ellipse ring lies at the ellipse radius from the centre (haversine, Sinnott 1984) with its major axis along the azimuth', () => {
    const a = 8;
    const b = 3;
    const az = 30;
    const ring = ellipseRing(46.3, 11.05, a, b, az, 72);
    expect(ring[0]).toEqual(ring[72]);
    ring.forEach(([lon, lat], k) => {
      const th = (2 * Math.PI * k) / 72;
      const want = Math.hypot(a * Math.cos(th), b * Math.sin(th));
      expect(Math.abs(haversineKm(46.3, 11.05, lat, lon) - want)).toBeLessThan(1e-6);
    });
    // θ = 0 is the end of the major axis: north-east of the centre for an azimuth of 30°.
    const [lon0, lat0] = ring[0] as [number, number];
    expect(lat0).toBeGreaterThan(46.3);
    expect(lon0).toBeGreaterThan(11.05);
  });

  it('scale bars use 1, 2, 5 × 10ⁿ km', () => {
    expect([0.7, 1, 3, 9.9, 12, 260].map(niceScaleKm)).toEqual([0.5, 1, 2, 5, 10, 200]);
  });
});
