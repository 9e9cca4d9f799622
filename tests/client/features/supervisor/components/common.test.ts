import { describe, expect, it } from 'vitest';
import { dayRange, daySplits, periodText, periodUpToLatest } from '@client/features/supervisor/components/common';

/*
 * Default periods and the per-day time axis of the supervisor screens. Expected values are worked
 * by hand from the calendar (UTC days of 86 400 s; 2026-03-14T00:00Z is 1 773 446 400 s after the
 * Unix epoch: 20 526 days × 86 400 s).
 */
const DAY = 86_400;
const mar14 = 1_773_446_400;

describe('periodUpToLatest', () => {
  it('ends after the day of the latest window and spans the given days', () => {
    const p = periodUpToLatest('2026-03-14T09:26:53.589Z', 7, new Date('2026-12-01T23:00:00Z'));
    expect(p).toEqual({ from: '2026-03-08T00:00:00.000Z', to: '2026-03-15T00:00:00.000Z', basis: 'data', days: 7 });
    expect(periodText(p)).toBe('latest 7 days with items: 2026-03-08 to 2026-03-14 (UTC days)');
    expect(periodText(p, 'XX.KV01')).toBe('latest 7 days with items at XX.KV01: 2026-03-08 to 2026-03-14 (UTC days)');
  });

  it('a window at 00:00 exactly still counts its own day; across a month end', () => {
    expect(periodUpToLatest('2026-03-01T00:00:00.000Z', 7)).toMatchObject({ from: '2026-02-23T00:00:00.000Z', to: '2026-03-02T00:00:00.000Z' });
  });

  it('falls back to the days up to today when there is no item', () => {
    const p = periodUpToLatest(null, 7, new Date('2026-12-01T23:00:00Z'));
    expect(p).toEqual({ from: '2026-11-25T00:00:00.000Z', to: '2026-12-02T00:00:00.000Z', basis: 'clock', days: 7 });
    expect(periodText(p)).toBe('last 7 days (no items yet): 2026-11-25 to 2026-12-01 (UTC days)');
  });
});

describe('per-day axis', () => {
  it('the epoch figure used here is 2026-03-14T00:00Z', () => {
    expect(new Date(mar14 * 1000).toISOString()).toBe('2026-03-14T00:00:00.000Z');
  });

  it('one day alone: a 3-day range centred on it, ticks at the midnights inside', () => {
    const [lo, hi] = dayRange(mar14, mar14);
    expect([lo, hi]).toEqual([mar14 - 1.5 * DAY, mar14 + 1.5 * DAY]);
    expect(daySplits(lo, hi)).toEqual([mar14 - DAY, mar14, mar14 + DAY]);
  });

  it('a 14-day period: half a day of room each side, one tick a day', () => {
    const [lo, hi] = dayRange(mar14, mar14 + 13 * DAY);
    expect([lo, hi]).toEqual([mar14 - DAY / 2, mar14 + 13.5 * DAY]);
    // 14 midnights do not fit in 10 ticks: every second day, from the first.
    expect(daySplits(lo, hi)).toEqual([0, 2, 4, 6, 8, 10, 12].map((k) => mar14 + k * DAY));
  });

  it('90 days: a tick every 14 days (7-day ticks would be 13, more than 10), all at UTC midnight', () => {
    const [lo, hi] = dayRange(mar14, mar14 + 89 * DAY);
    const ticks = daySplits(lo, hi);
    expect(ticks.length).toBeLessThanOrEqual(10);
    for (const t of ticks) expect(t % DAY).toBe(0);
    expect((ticks[1] ?? Number.NaN) - (ticks[0] ?? Number.NaN)).toBe(14 * DAY);
  });
});
