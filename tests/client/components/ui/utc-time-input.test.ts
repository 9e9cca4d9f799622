import { describe, expect, it } from 'vitest';
import { formatUtcTimeText, parseUtcTimeText } from '@client/components/ui/utc-time-input';

/*
 * The UTC time field's parser against ISO 8601 (extended format, UTC designator "Z"; RFC 3339
 * §5.6 profile): the accepted forms give the instant JavaScript's own Date.UTC gives for the same
 * fields, written out here by hand; everything else is refused with a message naming the problem.
 */
describe('parseUtcTimeText', () => {
  it.each([
    ['2026-03-14', '2026-03-14T00:00:00.000Z'],
    ['2026-03-14T00:00Z', '2026-03-14T00:00:00.000Z'],
    ['2026-03-14T09:26Z', '2026-03-14T09:26:00.000Z'],
    ['2026-03-14T09:26:53Z', '2026-03-14T09:26:53.000Z'],
    ['2026-03-14T09:26:53.589Z', '2026-03-14T09:26:53.589Z'],
    [' 2026-03-14t09:26z ', '2026-03-14T09:26:00.000Z'],
    ['2024-02-29', '2024-02-29T00:00:00.000Z'], // a leap day (2024 is divisible by 4, not by 100)
    // A space for the T, as RFC 3339 §5.6 allows "for the sake of readability"; no Z in a field
    // labelled UTC is still UTC (never the browser's local time).
    ['2026-03-14 12:00', '2026-03-14T12:00:00.000Z'],
    ['2026-03-14 12:00Z', '2026-03-14T12:00:00.000Z'],
    ['2026-03-14  09:26:53.5', '2026-03-14T09:26:53.500Z'],
    ['2026-03-14T09:26', '2026-03-14T09:26:00.000Z'],
  ])('reads %j as %s', (text, iso) => {
    expect(parseUtcTimeText(text)).toEqual({ ok: true, iso });
  });

  it.each([
    ['', /Enter a UTC time, e\.g\. 2026-03-14T00:00Z/],
    ['03/14/2026', /Not a UTC time: use 2026-03-14T00:00Z/],
    ['2026-03-14T09:26+01:00', /Not a UTC time/], // offsets are refused, not converted
    ['2026-03-14 09:26 +0100', /Not a UTC time/],
    ['2026-03-1412:00', /Not a UTC time/], // a separator is needed
    ['2026-03-14 24:00', /^24:00 is not a time of day/],
    ['2026-02-30', /2026-02-30 is not a day of the calendar/],
    ['2025-02-29', /2025-02-29 is not a day of the calendar/], // 2025 is no leap year
    ['2026-03-14T24:00Z', /^24:00 is not a time of day/],
    ['2026-03-14T09:60Z', /^09:60 is not a time of day/],
  ])('refuses %j', (text, message) => {
    const r = parseUtcTimeText(text);
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.message).toMatch(message);
  });
});

describe('formatUtcTimeText', () => {
  it('shows minutes, seconds or milliseconds as needed, and leaves non-times alone', () => {
    expect(formatUtcTimeText('2026-03-14T00:00:00.000Z')).toBe('2026-03-14T00:00Z');
    expect(formatUtcTimeText('2026-03-14T09:26:53.000Z')).toBe('2026-03-14T09:26:53Z');
    expect(formatUtcTimeText('2026-03-14T09:26:53.589Z')).toBe('2026-03-14T09:26:53.589Z');
    expect(formatUtcTimeText('soon')).toBe('soon');
  });

  it('round-trips through the parser', () => {
    for (const iso of ['2026-03-14T00:00:00.000Z', '2026-03-14T09:26:53.000Z', '1999-12-31T23:59:59.999Z']) {
      const r = parseUtcTimeText(formatUtcTimeText(iso));
      expect(r).toEqual({ ok: true, iso });
    }
  });
});
