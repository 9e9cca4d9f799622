import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import {
  allowedLagS,
  compatible,
  firstTriggerMs,
  groupArrivals,
  haversineKm,
  isCandidateEvent,
  maxAllowedLagS,
  type Arrival,
} from '@server/features/events/candidate-events';

// Hand-worked: one degree of arc on a sphere of radius 6371 km is 6371·π/180 = 111.19492664 km;
// a quarter meridian is 6371·π/2 = 10007.543398 km (geometry of the sphere; R = 6371 km is common practice).
describe('haversineKm', () => {
  it('gives one degree of arc along the equator and along a meridian', () => {
    expect(haversineKm(0, 0, 0, 1)).toBeCloseTo(111.19492664, 6);
    expect(haversineKm(10, 20, 11, 20)).toBeCloseTo(111.19492664, 6);
  });
  it('gives a quarter meridian from the equator to the pole', () => {
    expect(haversineKm(0, 0, 90, 0)).toBeCloseTo(10007.543398, 5);
  });
  it('gives half the circumference for antipodes (6371·π = 20015.086796 km)', () => {
    expect(haversineKm(0, 0, 0, 180)).toBeCloseTo(20015.086796, 5);
  });
  it('shrinks longitude arcs by cos(latitude): 1° at 60° N is close to 111.19/2 (small-arc check)', () => {
    // Along a parallel the great circle is slightly shorter than the parallel arc 55.597 km.
    const d = haversineKm(60, 0, 60, 1);
    expect(d).toBeLessThan(55.5975);
    expect(d).toBeGreaterThan(55.59);
  });
  it('refuses bad coordinates with a message naming them', () => {
    expect(() => haversineKm(Number.NaN, 0, 0, 0)).toThrow(/lat1 must be a finite number/);
    expect(() => haversineKm(91, 0, 0, 0)).toThrow(/within −90…90/);
  });
});

// Fixture stations on the equator 0.1° apart: A–B and B–C are 11.119493 km apart, A–C 22.238985 km.
// Allowed lags with 3 km/s and 2 s: 11.119493/3 + 2 = 5.706498 s; 22.238985/3 + 2 = 9.412995 s (hand-worked).
const st = {
  A: { stationId: 1, latitude: 0, longitude: 0 },
  B: { stationId: 2, latitude: 0, longitude: 0.1 },
  C: { stationId: 3, latitude: 0, longitude: 0.2 },
  D: { stationId: 4, latitude: 0, longitude: 0.3 },
};
const T0 = Date.parse('2026-03-14T09:26:50.000Z');
const at = (itemId: number, s: keyof typeof st, seconds: number): Arrival => ({ itemId, ...st[s], arrivalMs: T0 + seconds * 1000 });

describe('allowed lag and compatibility', () => {
  it('is distance over velocity plus slack', () => {
    expect(allowedLagS(haversineKm(0, 0, 0, 0.1))).toBeCloseTo(5.706498, 5);
    expect(allowedLagS(haversineKm(0, 0, 0, 0.2))).toBeCloseTo(9.412995, 5);
    expect(allowedLagS(30, { minStations: 3, velocityKmS: 6, slackS: 0 })).toBe(5);
  });
  it('accepts a lag just inside and refuses one just outside the allowance', () => {
    expect(compatible(at(1, 'A', 0), at(2, 'B', 5.70))).toBe(true);
    expect(compatible(at(1, 'A', 0), at(2, 'B', 5.71))).toBe(false);
    expect(compatible(at(1, 'A', 0), at(2, 'C', 9.41))).toBe(true);
    expect(compatible(at(1, 'A', 0), at(2, 'C', 9.42))).toBe(false);
  });
  it('never links two items of the same station', () => {
    expect(compatible(at(1, 'A', 0), at(2, 'A', 0))).toBe(false);
  });
  it('refuses bad settings by name', () => {
    expect(() => allowedLagS(1, { minStations: 3, velocityKmS: 0, slackS: 2 })).toThrow(/velocityKmS/);
    expect(() => allowedLagS(-1)).toThrow(/distance/);
  });
});

describe('groupArrivals on fixtures with known arrival times', () => {
  // Event 1: A at 0 s, B at 3 s, C at 7 s: A–B 3 ≤ 5.71, B–C 4 ≤ 5.71, A–C 7 ≤ 9.41 → one group of 3 stations.
  // Event 2: A at 100 s, B at 104 s, C at 111 s: A–B 4 ≤ 5.71 but B–C 7 > 5.71 and A–C 11 > 9.41 → {A,B} and {C}.
  // Chain: B at 200 s, C at 205 s, D at 210 s: B–C 5 ≤ 5.71, C–D 5 ≤ 5.71, B–D 10 > 9.41 → one group by the chain.
  // A repeated trigger at A 1 s after event 1's start joins through B (lag 2 s) but adds no station.
  const fixture: Arrival[] = [
    at(11, 'A', 0), at(12, 'B', 3), at(13, 'C', 7), at(14, 'A', 1),
    at(21, 'A', 100), at(22, 'B', 104), at(23, 'C', 111),
    at(31, 'B', 200), at(32, 'C', 205), at(33, 'D', 210),
  ];
  const expected = [
    { anchorItemId: 11, itemIds: [11, 12, 13, 14], stationIds: [1, 2, 3], firstArrivalMs: T0, lastArrivalMs: T0 + 7000 },
    { anchorItemId: 21, itemIds: [21, 22], stationIds: [1, 2], firstArrivalMs: T0 + 100_000, lastArrivalMs: T0 + 104_000 },
    { anchorItemId: 23, itemIds: [23], stationIds: [3], firstArrivalMs: T0 + 111_000, lastArrivalMs: T0 + 111_000 },
    { anchorItemId: 31, itemIds: [31, 32, 33], stationIds: [2, 3, 4], firstArrivalMs: T0 + 200_000, lastArrivalMs: T0 + 210_000 },
  ];

  it('finds the groups in arrival order', () => {
    expect(groupArrivals(fixture)).toEqual(expected);
    expect(groupArrivals(fixture).filter((g) => isCandidateEvent(g)).map((g) => g.anchorItemId)).toEqual([11, 31]);
  });

  it('finds the same groups in reverse order and in a fixed shuffle', () => {
    expect(groupArrivals([...fixture].reverse())).toEqual(expected);
    const order = [7, 2, 9, 0, 5, 3, 8, 1, 6, 4];
    expect(groupArrivals(order.map((i) => fixture[i] as Arrival))).toEqual(expected);
  });

  it('gives the same result with the horizon as with all pairs', () => {
    const horizon = maxAllowedLagS(Object.values(st));
    expect(horizon).toBeCloseTo(haversineKm(0, 0, 0, 0.3) / 3 + 2, 9);
    expect(groupArrivals(fixture, undefined, horizon)).toEqual(expected);
  });

  it('honours minStations', () => {
    const two = { minStations: 2, velocityKmS: 3, slackS: 2 };
    expect(groupArrivals(fixture, two).filter((g) => isCandidateEvent(g, two)).map((g) => g.anchorItemId)).toEqual([11, 21, 31]);
  });

  it('refuses duplicate ids and non-finite times', () => {
    expect(() => groupArrivals([at(1, 'A', 0), at(1, 'B', 1)])).toThrow(/item 1 appears twice/);
    expect(() => groupArrivals([{ ...at(1, 'A', 0), arrivalMs: Number.NaN }])).toThrow(/finite/);
  });
});

/** Naive reference: breadth-first search over all pairs (no sorting, no horizon). */
function naiveGroups(arrivals: readonly Arrival[]): number[][] {
  const left = new Map(arrivals.map((a) => [a.itemId, a]));
  const out: number[][] = [];
  for (const a of arrivals) {
    if (!left.has(a.itemId)) continue;
    left.delete(a.itemId);
    const comp = [a];
    for (let k = 0; k < comp.length; k++) {
      const x = comp[k] as Arrival;
      for (const [id, y] of [...left]) {
        if (compatible(x, y)) {
          left.delete(id);
          comp.push(y);
        }
      }
    }
    out.push(comp.map((c) => c.itemId).sort((p, q) => p - q));
  }
  return out.sort((p, q) => (p[0] as number) - (q[0] as number));
}

describe('order independence (fast-check)', () => {
  const stationsArb = fc.array(fc.record({ latitude: fc.double({ min: 40, max: 40.5, noNaN: true }), longitude: fc.double({ min: 10, max: 10.5, noNaN: true }) }), { minLength: 2, maxLength: 6 });
  const caseArb = stationsArb.chain((stations) =>
    fc
      .array(fc.record({ s: fc.nat({ max: stations.length - 1 }), tMs: fc.integer({ min: 0, max: 120_000 }) }), { minLength: 1, maxLength: 40 })
      .map((rows) => ({
        stations,
        arrivals: rows.map((r, i): Arrival => {
          const s = stations[r.s] as { latitude: number; longitude: number };
          return { itemId: i + 1, stationId: r.s + 1, latitude: s.latitude, longitude: s.longitude, arrivalMs: T0 + r.tMs };
        }),
      })),
  );

  it('groups identically under any permutation of the arrivals, and as a naive all-pairs search', () => {
    fc.assert(
      fc.property(caseArb, fc.infiniteStream(fc.nat()), ({ stations, arrivals }, rnd) => {
        const keys = arrivals.map(() => rnd.next().value as number);
        const shuffled = arrivals.map((a, i) => ({ a, k: keys[i] as number })).sort((x, y) => x.k - y.k).map((x) => x.a);
        const reference = groupArrivals(arrivals);
        const horizon = maxAllowedLagS(stations);
        expect(groupArrivals(shuffled, undefined, horizon)).toEqual(reference);
        expect(reference.map((g) => g.itemIds).sort((p, q) => (p[0] as number) - (q[0] as number))).toEqual(naiveGroups(arrivals));
      }),
      { numRuns: 200 },
    );
  });
});

describe('firstTriggerMs', () => {
  it('reads the lead channel start time plus its first trigger-on', () => {
    const analysis = {
      leadChannel: 'XX.KV01.00.HHZ',
      channels: [
        { id: 'XX.KV01.00.HHN', startTime: '2026-03-14T09:26:00.000Z', staLta: { triggers: [{ on: 1, off: 2 }] } },
        { id: 'XX.KV01.00.HHZ', startTime: '2026-03-14T09:26:00.010Z', staLta: { triggers: [{ on: 40.25, off: 48 }, { on: 60, off: null }] } },
      ],
    };
    expect(firstTriggerMs(analysis)).toBe(Date.parse('2026-03-14T09:26:40.260Z'));
  });
  it('is null without a trigger or for a foreign shape', () => {
    expect(firstTriggerMs({ leadChannel: 'a', channels: [{ id: 'a', startTime: '2026-03-14T09:26:00.000Z', staLta: { triggers: [] } }] })).toBeNull();
    expect(firstTriggerMs({ channels: 'nope' })).toBeNull();
    expect(firstTriggerMs(null)).toBeNull();
  });
});
