import { endianness } from 'node:os';
import { deflateRawSync, inflateRawSync, constants as zlibConstants } from 'node:zlib';

const LITTLE_ENDIAN = endianness() === 'LE';

/**
 * How the decoded samples of a window channel are stored (window_channels.samples).
 *
 * Two layouts can be in the column:
 *
 * 1. Legacy (rows written before this codec): the samples as little-endian IEEE 754 binary64, with
 *    no header, so the blob is exactly `sample_count × 8` bytes.
 * 2. Tagged: an 8-byte header, then the payload.
 *
 *        byte 0–1  'S' 'K'            (0x53 0x4B)
 *        byte 2    sample encoding    1 = int32 little-endian, 2 = float64 little-endian
 *        byte 3    compression        0 = none, 1 = raw DEFLATE (RFC 1951, node:zlib deflateRaw)
 *        byte 4–5  0                  (reserved)
 *        byte 6–7  0xF8 0x7F
 *
 *    Read as a little-endian float64, the header's top 16 bits are 0x7FF8: a quiet NaN (IEEE 754).
 *    A legacy blob can never start with a NaN, because every decoder refuses non-finite samples
 *    (server/formats/mseed2.ts, csv.ts), so the two layouts cannot be mistaken for each other.
 *
 * int32 is chosen when every sample is an integer within int32 range (digitiser counts, the usual
 * case: half the bytes of float64, exact); anything else (e.g. float32 or float64 MiniSEED data)
 * stays float64, so no value ever changes.
 */

const MAGIC_0 = 0x53;
const MAGIC_1 = 0x4b;
const TAIL_6 = 0xf8;
const TAIL_7 = 0x7f;
/** Bytes of the tagged header. */
export const SAMPLES_HEADER_BYTES = 8;

/** The sample encoding byte of a tagged blob. */
export const SampleEncoding = { int32: 1, float64: 2 } as const;
/** The compression byte of a tagged blob. */
export const SampleCompression = { none: 0, deflate: 1 } as const;

/** Options of `encodeSamples`. */
export interface EncodeSamplesOptions {
  /**
   * Raw-DEFLATE the payload at this zlib level (1 = fastest … 9), or false for none (the default:
   * measured by `npm run bench:ingest`, see docs/PERFORMANCE.md).
   */
  deflateLevel?: number | false;
}

/** Whether every sample is an integer in [-2³¹, 2³¹ − 1] (so int32 stores it exactly). */
export function fitsInt32(samples: Float64Array): boolean {
  for (let i = 0; i < samples.length; i++) {
    const v = samples[i] as number;
    // (v | 0) === v is true exactly for integers in int32 range; -0 is excluded so it round-trips.
    if ((v | 0) !== v || Object.is(v, -0)) return false;
  }
  return true;
}

/**
 * Encodes samples for window_channels.samples as a tagged blob (layout in this module's comment):
 * int32 LE when `fitsInt32`, else float64 LE, optionally raw-DEFLATEd.
 * @throws RangeError when `deflateLevel` is not a whole number from 1 to 9
 */
export function encodeSamples(samples: Float64Array, opts: EncodeSamplesOptions = {}): Buffer {
  const level = opts.deflateLevel ?? false;
  if (level !== false && (!Number.isInteger(level) || level < 1 || level > 9)) throw new RangeError(`deflate level must be a whole number from 1 to 9, got ${level}`);
  const asInt = fitsInt32(samples);
  const width = asInt ? 4 : 8;
  if (level === false && LITTLE_ENDIAN) {
    // The common case (no DEFLATE): the samples are converted straight into the blob, after its
    // header, with no intermediate array. A fresh ArrayBuffer (not Buffer's shared pool), so the
    // typed view at byte 8 is aligned.
    const out = Buffer.from(new ArrayBuffer(SAMPLES_HEADER_BYTES + samples.length * width));
    (asInt ? new Int32Array(out.buffer, SAMPLES_HEADER_BYTES, samples.length) : new Float64Array(out.buffer, SAMPLES_HEADER_BYTES, samples.length)).set(samples);
    writeHeader(out, asInt, false);
    return out;
  }
  let raw: Buffer;
  if (LITTLE_ENDIAN) {
    // The typed array's own bytes are already little-endian: one bulk conversion, no per-sample call.
    const typed = asInt ? Int32Array.from(samples) : Float64Array.from(samples);
    raw = Buffer.from(typed.buffer, typed.byteOffset, typed.byteLength);
  } else {
    raw = Buffer.allocUnsafe(samples.length * width);
    if (asInt) for (let i = 0; i < samples.length; i++) raw.writeInt32LE(samples[i] as number, i * 4);
    else for (let i = 0; i < samples.length; i++) raw.writeDoubleLE(samples[i] as number, i * 8);
  }
  const payload = level === false ? raw : deflateRawSync(raw, { level, strategy: zlibConstants.Z_DEFAULT_STRATEGY });
  const out = Buffer.allocUnsafe(SAMPLES_HEADER_BYTES + payload.length);
  writeHeader(out, asInt, level !== false);
  payload.copy(out, SAMPLES_HEADER_BYTES);
  return out;
}

/** The 8-byte tagged header at the start of `out` (see the layout above). */
function writeHeader(out: Buffer, asInt: boolean, deflated: boolean): void {
  out[0] = MAGIC_0;
  out[1] = MAGIC_1;
  out[2] = asInt ? SampleEncoding.int32 : SampleEncoding.float64;
  out[3] = deflated ? SampleCompression.deflate : SampleCompression.none;
  out[4] = 0;
  out[5] = 0;
  out[6] = TAIL_6;
  out[7] = TAIL_7;
}

/** Whether `blob` starts with the tagged header (else it is a legacy float64 blob). */
export function isTaggedSamples(blob: Uint8Array): boolean {
  return blob.byteLength >= SAMPLES_HEADER_BYTES && blob[0] === MAGIC_0 && blob[1] === MAGIC_1 && blob[6] === TAIL_6 && blob[7] === TAIL_7;
}

/**
 * Decodes a stored samples blob of either layout (legacy float64, or tagged int32/float64, raw or
 * DEFLATEd). The bytes are copied, so the blob's alignment never matters.
 * @param expectedCount when given, the number of samples the row says it holds (sample_count)
 * @throws RangeError naming the problem: unknown encoding or compression byte, a corrupt DEFLATE
 *   stream, a payload that is not a whole number of samples, or a count other than `expectedCount`
 */
export function decodeStoredSamples(blob: Uint8Array, expectedCount?: number): Float64Array {
  const buf = Buffer.from(blob.buffer, blob.byteOffset, blob.byteLength);
  if (!isTaggedSamples(buf)) {
    if (expectedCount !== undefined && buf.length !== expectedCount * 8) throw new RangeError(`stored samples hold ${buf.length} bytes, expected ${expectedCount} × 8`);
    if (buf.length % 8 !== 0) throw new RangeError(`sample bytes (${buf.length}) are not a whole number of float64 values`);
    const out = new Float64Array(buf.length / 8);
    for (let i = 0; i < out.length; i++) out[i] = buf.readDoubleLE(i * 8);
    return out;
  }
  const enc = buf[2];
  const comp = buf[3];
  if (enc !== SampleEncoding.int32 && enc !== SampleEncoding.float64) throw new RangeError(`stored samples: unknown sample encoding ${enc}`);
  if (comp !== SampleCompression.none && comp !== SampleCompression.deflate) throw new RangeError(`stored samples: unknown compression ${comp}`);
  let payload = buf.subarray(SAMPLES_HEADER_BYTES);
  if (comp === SampleCompression.deflate) {
    try {
      payload = inflateRawSync(payload);
    } catch (err) {
      throw new RangeError(`stored samples: the DEFLATE stream is corrupt (${err instanceof Error ? err.message : String(err)})`);
    }
  }
  const width = enc === SampleEncoding.int32 ? 4 : 8;
  const kind = enc === SampleEncoding.int32 ? 'int32' : 'float64';
  if (payload.length % width !== 0) throw new RangeError(`stored samples: ${payload.length} payload bytes are not a whole number of ${kind} values`);
  const count = payload.length / width;
  if (expectedCount !== undefined && count !== expectedCount) throw new RangeError(`stored samples hold ${count} ${kind} values, expected ${expectedCount}`);
  const out = new Float64Array(count);
  if (width === 4) for (let i = 0; i < count; i++) out[i] = payload.readInt32LE(i * 4);
  else for (let i = 0; i < count; i++) out[i] = payload.readDoubleLE(i * 8);
  return out;
}
