/**
 * Reusable work arrays for the engine's long intermediate traces (the detrended and tapered traces,
 * the band-passed traces, the characteristic function, QC's residuals).
 *
 * Why: a fresh Float64Array of a long trace (5.8 MB for an hour at 200 sps) comes zero-filled from the
 * operating system, so the first write to each of its pages is a page fault, and the garbage collector
 * frees it again after the window. Measured on the 1-hour window of `npm run bench:engine` (2 cores,
 * shared machine): the same `sosfiltInto` took about 3× longer writing into fresh arrays inside the
 * pipeline than into a reused one, and the process spent a fifth of its time in the kernel. The
 * analysis keeps one array per named slot for the life of the thread instead, grown when a longer
 * trace comes (never shrunk: a worker that has seen a long window keeps ~8 × its length × 8 bytes).
 *
 * Rules for callers (the engine is synchronous, so one analysis at a time per thread):
 * - contents are NOT zeroed: write every element before reading it;
 * - a slot's array is valid until the next `workArray` call for the same slot; nothing returned to a
 *   caller of the engine may be (or alias) a work array — copy out plain numbers instead.
 */

/** The slots: one long trace each, all alive at the same time within one channel's analysis. */
export const WORK_SLOTS = ['detrended', 'preprocessed', 'band-reject', 'low-band', 'high-band', 'trigger-band', 'sta-lta', 'qc-residual', 'qc-block', 'energy-chunks'] as const;

/** A slot's name. */
export type WorkSlot = (typeof WORK_SLOTS)[number];

const slots = new Map<WorkSlot, Float64Array>();

/**
 * A Float64Array of exactly `n` elements for `slot` (a view of the slot's buffer; its contents are
 * whatever was there). @throws RangeError when n is not a whole number ≥ 0.
 */
export function workArray(slot: WorkSlot, n: number): Float64Array {
  if (!(Number.isInteger(n) && n >= 0)) throw new RangeError(`work array length must be a whole number ≥ 0, got ${n}`);
  let buf = slots.get(slot);
  if (!buf || buf.length < n) {
    buf = new Float64Array(n);
    slots.set(slot, buf);
  }
  return buf.length === n ? buf : buf.subarray(0, n);
}
