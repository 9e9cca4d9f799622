/**
 * Counts and codes for the screen without Intl: the first use of a locale-aware formatter or
 * collator loads the browser's locale data on the spot, tens of milliseconds on the first screen
 * of a slow machine. Seisift's figures are written in English and its codes are ASCII (FDSN).
 */

/** A whole count with thousands separators: 1234567 → "1,234,567" (as `toLocaleString('en')`). */
export function formatCount(n: number): string {
  if (!Number.isFinite(n)) return String(n);
  const sign = n < 0 ? '-' : '';
  const digits = String(Math.round(Math.abs(n)));
  let out = '';
  for (let i = 0; i < digits.length; i++) {
    if (i > 0 && (digits.length - i) % 3 === 0) out += ',';
    out += digits[i];
  }
  return sign + out;
}

/** Orders two codes (stream ids, station codes) by their characters, as a sort comparator. */
export function compareCodes(a: string, b: string): number {
  return a < b ? -1 : a > b ? 1 : 0;
}
