import { WaveformParseError } from './types';

/**
 * Bounds-checked reads over a byte buffer. Every read names the structure being read when it would
 * run past the end, so a truncated or lying file yields a WaveformParseError, never a RangeError.
 */
export class ByteReader {
  private readonly view: DataView;

  /**
   * @param bytes the buffer (not copied, never modified)
   * @param what words for error messages, e.g. `MiniSEED 2 record 3`
   */
  constructor(
    readonly bytes: Uint8Array,
    readonly what: string,
  ) {
    this.view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  }

  /** Number of bytes in the buffer. */
  get length(): number {
    return this.bytes.byteLength;
  }

  /** Throws unless `count` bytes starting at `offset` lie inside the buffer. */
  need(offset: number, count: number, field: string): void {
    if (!Number.isInteger(offset) || offset < 0 || count < 0 || offset + count > this.bytes.byteLength) {
      throw new WaveformParseError(
        `${this.what}: ${field} at byte ${offset} (${count} bytes) lies outside the ${this.bytes.byteLength} bytes available`,
        offset,
      );
    }
  }

  /** Unsigned 8-bit integer. */
  u8(offset: number, field: string): number {
    this.need(offset, 1, field);
    return this.view.getUint8(offset);
  }

  /** Signed 8-bit integer. */
  i8(offset: number, field: string): number {
    this.need(offset, 1, field);
    return this.view.getInt8(offset);
  }

  /** Unsigned 16-bit integer. */
  u16(offset: number, littleEndian: boolean, field: string): number {
    this.need(offset, 2, field);
    return this.view.getUint16(offset, littleEndian);
  }

  /** Signed 16-bit integer. */
  i16(offset: number, littleEndian: boolean, field: string): number {
    this.need(offset, 2, field);
    return this.view.getInt16(offset, littleEndian);
  }

  /** Unsigned 32-bit integer. */
  u32(offset: number, littleEndian: boolean, field: string): number {
    this.need(offset, 4, field);
    return this.view.getUint32(offset, littleEndian);
  }

  /** Signed 32-bit integer. */
  i32(offset: number, littleEndian: boolean, field: string): number {
    this.need(offset, 4, field);
    return this.view.getInt32(offset, littleEndian);
  }

  /** IEEE 754 binary32. */
  f32(offset: number, littleEndian: boolean, field: string): number {
    this.need(offset, 4, field);
    return this.view.getFloat32(offset, littleEndian);
  }

  /** IEEE 754 binary64. */
  f64(offset: number, littleEndian: boolean, field: string): number {
    this.need(offset, 8, field);
    return this.view.getFloat64(offset, littleEndian);
  }

  /** ASCII text of `count` bytes, trailing spaces and NULs removed. */
  ascii(offset: number, count: number, field: string): string {
    this.need(offset, count, field);
    let s = '';
    for (let i = 0; i < count; i++) s += String.fromCharCode(this.bytes[offset + i] ?? 0);
    return s.replace(/[\s\0]+$/u, '');
  }

  /** A view (not a copy) of `count` bytes starting at `offset`. */
  slice(offset: number, count: number, field: string): Uint8Array {
    this.need(offset, count, field);
    return this.bytes.subarray(offset, offset + count);
  }
}
