import { WaveformParseError } from './types';

/**
 * Converts a SEED-style year / day-of-year / h:m:s time to µs since 1970-01-01T00:00:00Z (UTC).
 * A second of 60 (a leap second) is accepted and counted as the first second of the next minute,
 * as POSIX time has no leap seconds (common practice).
 *
 * @param subsecondUs fraction of the second in µs (may be fractional; not rounded here)
 * @throws WaveformParseError naming `where` when a field is out of range
 */
export function seedTimeToUs(
  year: number,
  dayOfYear: number,
  hour: number,
  minute: number,
  second: number,
  subsecondUs: number,
  where: string,
): number {
  const leap = (year % 4 === 0 && year % 100 !== 0) || year % 400 === 0;
  if (year < 1900 || year > 2100) throw new WaveformParseError(`${where}: start year ${year} is outside 1900–2100`);
  if (dayOfYear < 1 || dayOfYear > (leap ? 366 : 365)) {
    throw new WaveformParseError(`${where}: day of year ${dayOfYear} does not exist in ${year}`);
  }
  if (hour > 23) throw new WaveformParseError(`${where}: hour ${hour} is out of range 0–23`);
  if (minute > 59) throw new WaveformParseError(`${where}: minute ${minute} is out of range 0–59`);
  if (second > 60) throw new WaveformParseError(`${where}: second ${second} is out of range 0–60`);
  const dayMs = Date.UTC(year, 0, 1) + (dayOfYear - 1) * 86_400_000;
  return dayMs * 1000 + ((hour * 60 + minute) * 60 + second) * 1_000_000 + subsecondUs;
}
