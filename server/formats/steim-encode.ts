/**
 * Steim-1 / Steim-2 compression (FDSN SEED manual 2.4, appendix B): the inverse of steim.ts.
 * Frame layout and codes are described there. Packing is greedy: each data word takes the densest
 * code that fits the next differences (Steim-2: 7×4, 6×5, 5×6, 4×8, 3×10, 2×15, 1×30 bits;
 * Steim-1: 4×8, 2×16, 1×32), never packing more differences than samples remain, so no padding
 * differences are written.
 */

/** Result of packing one record's worth of samples. */
export interface SteimPacked {
  /** Frames (64 bytes each), exactly `frames × 64` bytes long. */
  bytes: Uint8Array;
  /** Samples packed (from `start`). */
  count: number;
  /** Frames used. */
  frames: number;
}

interface Option {
  n: number;
  bits: number;
  code: number;
  dnib: number;
}

const STEIM2_OPTIONS: readonly Option[] = [
  { n: 7, bits: 4, code: 3, dnib: 2 },
  { n: 6, bits: 5, code: 3, dnib: 1 },
  { n: 5, bits: 6, code: 3, dnib: 0 },
  { n: 4, bits: 8, code: 1, dnib: -1 },
  { n: 3, bits: 10, code: 2, dnib: 3 },
  { n: 2, bits: 15, code: 2, dnib: 2 },
  { n: 1, bits: 30, code: 2, dnib: 1 },
];
const STEIM1_OPTIONS: readonly Option[] = [
  { n: 4, bits: 8, code: 1, dnib: -1 },
  { n: 2, bits: 16, code: 2, dnib: -1 },
  { n: 1, bits: 32, code: 3, dnib: -1 },
];

/**
 * Packs samples `x[start…]` into at most `maxFrames` Steim frames.
 *
 * @param x integer samples (counts)
 * @param start index of the first sample of this record; the first difference refers to
 *   x[start − 1] (0 for the first record), as the SEED manual describes
 * @param maxFrames frames available in the record
 * @param version 1 or 2
 * @param littleEndian word byte order (SEED practice and miniSEED 3: big-endian)
 * @throws RangeError when a difference needs more than 30 bits (Steim-2) or 32 bits (Steim-1)
 */
export function encodeSteim(
  x: Int32Array,
  start: number,
  maxFrames: number,
  version: 1 | 2,
  littleEndian: boolean,
): SteimPacked {
  const options = version === 1 ? STEIM1_OPTIONS : STEIM2_OPTIONS;
  const bytes = new Uint8Array(maxFrames * 64);
  const view = new DataView(bytes.buffer);
  const diff = (i: number): number => (x[i] ?? 0) - (i > 0 ? (x[i - 1] ?? 0) : 0);
  let i = start;
  let frame = 0;
  const fits = (d: number, bits: number): boolean => d >= -(2 ** (bits - 1)) && d < 2 ** (bits - 1);
  for (; frame < maxFrames && i < x.length; frame++) {
    const base = frame * 64;
    let ctrl = 0;
    for (let w = frame === 0 ? 3 : 1; w < 16 && i < x.length; w++) {
      const remaining = x.length - i;
      let chosen: Option | undefined;
      for (const opt of options) {
        if (opt.n > remaining) continue;
        let ok = true;
        for (let k = 0; k < opt.n && ok; k++) ok = fits(diff(i + k), opt.bits);
        if (ok) {
          chosen = opt;
          break;
        }
      }
      if (!chosen) {
        throw new RangeError(
          `sample ${i}: difference ${diff(i)} needs more than ${version === 1 ? 32 : 30} bits, too large for Steim-${version}`,
        );
      }
      const off = base + w * 4;
      if (chosen.code === 1) {
        for (let k = 0; k < 4; k++) view.setInt8(off + k, diff(i + k));
      } else if (version === 1 && chosen.bits === 16) {
        view.setInt16(off, diff(i), littleEndian);
        view.setInt16(off + 2, diff(i + 1), littleEndian);
      } else if (version === 1) {
        view.setInt32(off, diff(i), littleEndian);
      } else {
        let word = chosen.dnib * 2 ** 30;
        const mask = 2 ** chosen.bits;
        for (let k = 0; k < chosen.n; k++) {
          const d = diff(i + k);
          const field = d < 0 ? d + mask : d;
          word += field * 2 ** ((chosen.n - 1 - k) * chosen.bits);
        }
        view.setUint32(off, word, littleEndian);
      }
      ctrl = (ctrl | (chosen.code << (30 - 2 * w))) >>> 0;
      i += chosen.n;
    }
    view.setUint32(base, ctrl, littleEndian);
  }
  const count = i - start;
  if (count > 0) {
    view.setInt32(4, x[start] ?? 0, littleEndian); // X0, forward integration constant
    view.setInt32(8, x[i - 1] ?? 0, littleEndian); // Xn, reverse integration constant
  }
  return { bytes: bytes.subarray(0, frame * 64), count, frames: frame };
}
