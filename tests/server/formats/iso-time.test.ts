import { describe, expect, it } from 'vitest';
import { formatIsoTimeUs, parseIsoTimeUs } from '@server/formats/iso-time';

describe('ISO-8601 UTC times to µs (ISO 8601 / RFC 3339 layout)', () => {
  it('agrees with Date.parse to the ms and keeps µs beyond it', () => {
    // Reference: ECMAScript Date.parse for the ms part (Node's own implementation).
    for (const t of ['2026-03-14T09:26:53.589Z', '2024-02-29T23:59:59.999Z', '1999-12-31T00:00:00.000Z']) {
      expect(parseIsoTimeUs(t)).toBe(Date.parse(t) * 1000);
    }
    expect(parseIsoTimeUs('2026-03-14T09:26:53.589123Z')).toBe(Date.parse('2026-03-14T09:26:53.589Z') * 1000 + 123);
    expect(parseIsoTimeUs('2026-03-14T09:26:53.5891236Z')).toBe(Date.parse('2026-03-14T09:26:53.589Z') * 1000 + 124); // rounded
    expect(parseIsoTimeUs('2026-03-14 09:26:53')).toBe(Date.parse('2026-03-14T09:26:53Z') * 1000); // no zone: UTC
    expect(parseIsoTimeUs('2026-03-14T11:26:53+02:00')).toBe(Date.parse('2026-03-14T09:26:53Z') * 1000);
    expect(parseIsoTimeUs('2026-03-14T04:56:53-0430')).toBe(Date.parse('2026-03-14T09:26:53Z') * 1000);
  });

  it('refuses impossible dates and other text', () => {
    for (const t of ['2026-02-29T00:00:00Z', '2026-13-01T00:00:00Z', '2026-03-14T24:00:00Z', '2026-03-14', 'yesterday', '1773480413']) {
      expect(parseIsoTimeUs(t), t).toBeUndefined();
    }
  });

  it('formats µs back with six fraction digits', () => {
    const us = Date.parse('2026-03-14T09:26:53.589Z') * 1000 + 7;
    expect(formatIsoTimeUs(us)).toBe('2026-03-14T09:26:53.589007Z');
    expect(parseIsoTimeUs(formatIsoTimeUs(us))).toBe(us);
  });
});
