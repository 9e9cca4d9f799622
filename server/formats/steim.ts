import { WaveformParseError } from './types';

/**
 * Steim-1 and Steim-2 decompression (FDSN SEED manual 2.4, appendix B).
 *
 * Layout: the data are 64-byte frames of sixteen 32-bit words. Word 0 of each frame holds sixteen
 * 2-bit codes, one per word (the code for word k is bits 31−2k..30−2k). In the first frame, word 1 is
 * the forward integration constant X0 (= first sample) and word 2 the reverse integration constant
 * Xn (= last sample); differences start at word 3 (word 1 in later frames).
 *
 * Steim-1 codes: 0 no data, 1 four 8-bit differences, 2 two 16-bit, 3 one 32-bit.
 * Steim-2 codes: 0 no data, 1 four 8-bit differences; 2 reads a 2-bit sub-code `dnib` from the
 * word's top bits: 1 one 30-bit, 2 two 15-bit, 3 three 10-bit; 3 reads `dnib`: 0 five 6-bit,
 * 1 six 5-bit, 2 seven 4-bit (dnib 3 under code 3, and dnib 0 under code 2, are invalid).
 * Differences are two's-complement. The first difference of a record refers to the previous
 * record's last sample and is not used: sample 0 is X0, sample i = sample i−1 + d_i.
 *
 * @param data the data section (whole frames; a partial trailing frame is ignored)
 * @param sampleCount samples the header declares
 * @param littleEndian word byte order (MiniSEED 3 and SEED practice: big-endian)
 * @param version 1 or 2
 * @param where words naming the record, for error messages
 * @param maxFrames optional frame count (blockette 1001), capped at what the data section holds
 * @returns the samples, as counts in an Int32Array
 * @throws WaveformParseError when the frames hold fewer differences than declared, a code is
 *   invalid, or the last sample disagrees with the reverse integration constant
 */
export function decodeSteim(
  data: Uint8Array,
  sampleCount: number,
  littleEndian: boolean,
  version: 1 | 2,
  where: string,
  maxFrames?: number,
): Int32Array {
  const view = new DataView(data.buffer, data.byteOffset, data.byteLength);
  let frames = Math.floor(data.byteLength / 64);
  if (maxFrames !== undefined && maxFrames > 0 && maxFrames < frames) frames = maxFrames;
  const label = `Steim-${version}`;
  if (sampleCount === 0) return new Int32Array(0);
  if (frames === 0) {
    throw new WaveformParseError(`${where}: declares ${sampleCount} ${label} samples but has no complete 64-byte frame`);
  }
  // Each 32-bit word holds at most 4 (Steim-1) or 7 (Steim-2) differences: cap the allocation.
  const capacity = frames * 15 * (version === 1 ? 4 : 7);
  if (sampleCount > capacity) {
    throw new WaveformParseError(
      `${where}: declares ${sampleCount} samples but ${frames} ${label} frames can hold at most ${capacity}`,
    );
  }
  // Differences first (a word may hold a few beyond the declared count: 7 slots of slack), then
  // integrate; Int32 arithmetic wraps like the 32-bit integers of the format.
  const diffs = new Int32Array(sampleCount + 7);
  const x0 = view.getInt32(4, littleEndian);
  const xn = view.getInt32(8, littleEndian);
  let n = 0;
  for (let f = 0; f < frames && n < sampleCount; f++) {
    const base = f * 64;
    const ctrl = view.getUint32(base, littleEndian);
    for (let w = f === 0 ? 3 : 1; w < 16 && n < sampleCount; w++) {
      const code = (ctrl >>> (30 - 2 * w)) & 3;
      const off = base + w * 4;
      if (code === 0) continue;
      if (code === 1) {
        // four 8-bit differences, first byte first
        diffs[n] = view.getInt8(off);
        diffs[n + 1] = view.getInt8(off + 1);
        diffs[n + 2] = view.getInt8(off + 2);
        diffs[n + 3] = view.getInt8(off + 3);
        n += 4;
        continue;
      }
      if (version === 1) {
        if (code === 2) {
          diffs[n] = view.getInt16(off, littleEndian);
          diffs[n + 1] = view.getInt16(off + 2, littleEndian);
          n += 2;
        } else {
          diffs[n++] = view.getInt32(off, littleEndian);
        }
        continue;
      }
      const word = view.getUint32(off, littleEndian);
      const dnib = word >>> 30;
      let count: number;
      let bits: number;
      if (code === 2) {
        if (dnib === 1) [count, bits] = [1, 30];
        else if (dnib === 2) [count, bits] = [2, 15];
        else if (dnib === 3) [count, bits] = [3, 10];
        else throw new WaveformParseError(`${where}: invalid Steim-2 sub-code 0 under code 2 in frame ${f}, word ${w}`);
      } else if (dnib === 0) [count, bits] = [5, 6];
      else if (dnib === 1) [count, bits] = [6, 5];
      else if (dnib === 2) [count, bits] = [7, 4];
      else throw new WaveformParseError(`${where}: invalid Steim-2 sub-code 3 under code 3 in frame ${f}, word ${w}`);
      const shift = 32 - bits;
      for (let k = count - 1; k >= 0; k--) {
        // move the field to the top bits, then an arithmetic shift sign-extends it
        diffs[n++] = ((word >>> (k * bits)) << shift) >> shift;
      }
    }
  }
  if (n < sampleCount) {
    throw new WaveformParseError(`${where}: declares ${sampleCount} samples but its ${label} frames hold only ${n}`);
  }
  const out = new Int32Array(sampleCount);
  let last = x0;
  out[0] = x0; // the first difference refers to the previous record and is not used
  for (let i = 1; i < sampleCount; i++) {
    last = (last + (diffs[i] ?? 0)) | 0;
    out[i] = last;
  }
  if (last !== xn) {
    throw new WaveformParseError(
      `${where}: ${label} last sample ${last} disagrees with the reverse integration constant ${xn} (corrupt data)`,
    );
  }
  return out;
}

