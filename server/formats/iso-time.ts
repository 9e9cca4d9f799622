/**
 * ISO-8601 UTC date-times to µs since 1970-01-01T00:00:00Z, exactly (Date.parse keeps only ms).
 * Accepted: `YYYY-MM-DDTHH:MM:SS[.f…]` with 1–9 fraction digits, a `T` or a space between date and
 * time, and an optional zone `Z`, `+HH:MM`/`-HH:MM` (a time without a zone is UTC, the convention
 * of the trade: common practice). Fractions beyond µs are rounded to the nearest µs.
 */
const ISO = /^(\d{4})-(\d{2})-(\d{2})[T ](\d{2}):(\d{2}):(\d{2})(?:\.(\d{1,9}))?(Z|[+-]\d{2}:?\d{2})?$/u;

/**
 * Parses an ISO-8601 date-time (see module comment) to µs since epoch.
 * @returns undefined when the text is not such a time or a field is out of range
 */
export function parseIsoTimeUs(text: string): number | undefined {
  const m = ISO.exec(text.trim());
  if (!m) return undefined;
  const [, y, mo, d, h, mi, s, frac, zone] = m;
  const year = Number(y);
  const month = Number(mo);
  const day = Number(d);
  const hour = Number(h);
  const minute = Number(mi);
  const second = Number(s);
  if (month < 1 || month > 12 || hour > 23 || minute > 59 || second > 60) return undefined;
  const daysInMonth = new Date(Date.UTC(year, month, 0)).getUTCDate();
  if (day < 1 || day > daysInMonth) return undefined;
  let offsetMin = 0;
  if (zone && zone !== 'Z') {
    const sign = zone.startsWith('-') ? -1 : 1;
    const digits = zone.slice(1).replace(':', '');
    const zh = Number(digits.slice(0, 2));
    const zm = Number(digits.slice(2, 4));
    if (zh > 23 || zm > 59) return undefined;
    offsetMin = sign * (zh * 60 + zm);
  }
  const fracUs = frac ? Math.round(Number(`0.${frac}`) * 1e6) : 0;
  const ms = Date.UTC(year, month - 1, day, hour, minute, 0) - offsetMin * 60_000;
  return ms * 1000 + second * 1_000_000 + fracUs;
}

/** Formats µs since epoch as ISO 8601 UTC with 6 fraction digits, e.g. `2026-03-14T09:26:53.589000Z`. */
export function formatIsoTimeUs(us: number): string {
  const ms = Math.floor(us / 1000);
  const rest = us - ms * 1000;
  const base = new Date(ms).toISOString(); // …SS.mmmZ
  return `${base.slice(0, -1)}${String(Math.round(rest)).padStart(3, '0')}Z`;
}
