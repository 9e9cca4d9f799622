/**
 * Compact amplitude labels for trace axes: SI prefixes (BIPM, The International System of Units,
 * 9th ed. 2019, table 7: n 10⁻⁹, µ 10⁻⁶, m 10⁻³, k 10³, M 10⁶, G 10⁹) and the true minus sign
 * (U+2212), so "−3.4k counts" or "1.2µ m/s" fit a 56 px axis where "−3.40e+4" does not.
 */

const prefixes: ReadonlyArray<{ exp: number; symbol: string }> = [
  { exp: -9, symbol: 'n' },
  { exp: -6, symbol: 'µ' },
  { exp: -3, symbol: 'm' },
  { exp: 0, symbol: '' },
  { exp: 3, symbol: 'k' },
  { exp: 6, symbol: 'M' },
  { exp: 9, symbol: 'G' },
];

/** The SI prefix whose range [10^exp, 10^(exp+3)) holds |v| (clamped to n…G; '' for 0). */
export function siPrefixFor(v: number): { exp: number; symbol: string } {
  const a = Math.abs(v);
  const fallback = { exp: 0, symbol: '' };
  if (!Number.isFinite(a) || a === 0) return fallback;
  const exp3 = Math.floor(Math.log10(a) / 3 + 1e-9) * 3;
  const clamped = Math.max(-9, Math.min(9, exp3));
  return prefixes.find((p) => p.exp === clamped) ?? fallback;
}

const minus = (s: string) => s.replace('-', '\u2212');

/**
 * One value with its own SI prefix and 3 significant digits (trailing zeros dropped), e.g.
 * 1234 → "1.23k", −0.0000034 → "−3.4µ", 0 → "0".
 */
export function formatSi(v: number): string {
  if (!Number.isFinite(v)) return String(v);
  if (v === 0) return '0';
  const p = siPrefixFor(v);
  let scaled = Number((v / 10 ** p.exp).toPrecision(3));
  // Rounding may carry into the next prefix (999.6 → 1000): step up once.
  if (Math.abs(scaled) >= 1000 && p.exp < 9) return minus(`${Number((v / 10 ** (p.exp + 3)).toPrecision(3))}${siPrefixFor(v * 10).symbol}`);
  scaled = Object.is(scaled, -0) ? 0 : scaled;
  return minus(`${scaled}${p.symbol}`);
}

/**
 * Tick labels of one axis with ONE prefix for all of them (chosen by the largest |tick|) and the
 * fewest decimals (0–3) that write every tick exactly, so a scale reads evenly:
 * [−2000, 0, 2000] → ["−2k", "0", "2k"]; [−1.5e-6, 0, 1.5e-6] → ["−1.5µ", "0", "1.5µ"].
 * Non-finite entries give ''.
 */
export function siTickLabels(ticks: readonly (number | null | undefined)[]): string[] {
  const finite = ticks.filter((t): t is number => typeof t === 'number' && Number.isFinite(t));
  const big = finite.reduce((m, t) => Math.max(m, Math.abs(t)), 0);
  const p = siPrefixFor(big);
  const scale = 10 ** p.exp;
  let decimals = 3;
  for (let d = 0; d <= 3; d++) {
    const f = 10 ** d;
    if (finite.every((t) => Math.abs((t / scale) * f - Math.round((t / scale) * f)) < 1e-6)) {
      decimals = d;
      break;
    }
  }
  return ticks.map((t) => {
    if (typeof t !== 'number' || !Number.isFinite(t)) return '';
    if (t === 0) return '0';
    return minus(`${(t / scale).toFixed(decimals)}${p.symbol}`);
  });
}

/**
 * Evenly spaced "nice" ticks over [min, max]: the step is 1, 2 or 5 × 10ⁿ (the usual 1-2-5 series
 * of chart axes, common practice), the smallest such step giving at most `maxTicks` ticks, and
 * the ticks are whole multiples of it (so 0 is one when the range spans it). Works at any
 * magnitude (m/s traces sit near 10⁻⁶). Returns [] for an empty or non-finite range.
 */
export function niceTicks(min: number, max: number, maxTicks: number): number[] {
  if (!Number.isFinite(min) || !Number.isFinite(max) || max <= min || maxTicks < 1) return [];
  const step = niceStep((max - min) / Math.max(1, maxTicks));
  const out: number[] = [];
  for (let k = Math.ceil(min / step - 1e-9); k * step <= max * (1 + 1e-12) + step * 1e-9; k++) out.push(k === 0 ? 0 : k * step);
  return out;
}

/** The smallest 1, 2 or 5 × 10ⁿ at least `rough` (> 0). */
export function niceStep(rough: number): number {
  const mag = 10 ** Math.floor(Math.log10(rough));
  for (const m of [1, 2, 5]) if (m * mag >= rough * (1 - 1e-9)) return m * mag;
  return 10 * mag;
}

/**
 * A y range symmetric about 0 that ends on a tick: half-width = the first multiple of
 * niceStep(a/2) at or above a = 1.05 · max(|min|, |max|), so `niceTicks(−h, h, 4)` gives 3–5 ticks
 * including ±h and 0 (a small trace panel then always shows a scale, not a lone "0").
 * [−1, 1] for an all-zero or non-finite range.
 */
export function symmetricRange(min: number | null, max: number | null): [number, number] {
  const a = 1.05 * Math.max(Math.abs(min ?? 0), Math.abs(max ?? 0));
  if (!Number.isFinite(a) || a === 0) return [-1, 1];
  const step = niceStep(a / 2);
  const half = Math.ceil(a / step - 1e-9) * step;
  return [-half, half];
}
