/**
 * The median of `values`: the middle value of the sorted list, or the mean of the two middle
 * values for an even count (the usual definition; common practice). The input is not changed.
 * Units are those of the values.
 * @returns NaN for an empty list (callers that want null or an error decide that themselves)
 */
export function median(values: readonly number[]): number {
  const n = values.length;
  if (n === 0) return NaN;
  const s = [...values].sort((a, b) => a - b);
  const m = n >> 1;
  return n % 2 ? (s[m] as number) : ((s[m - 1] as number) + (s[m] as number)) / 2;
}
