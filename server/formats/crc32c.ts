/**
 * CRC-32C (Castagnoli): reflected polynomial 0x82F63B78 (normal form 0x1EDC6F41), initial value
 * 0xFFFFFFFF, final XOR 0xFFFFFFFF, input and output reflected — the CRC of RFC 3720 (iSCSI)
 * appendix B.4 and of the FDSN miniSEED 3 specification. Check value: CRC-32C("123456789") =
 * 0xE3069283 (RFC 3720 / common practice). Table-driven, one byte at a time.
 */
const TABLE: Uint32Array = (() => {
  const t = new Uint32Array(256);
  for (let n = 0; n < 256; n++) {
    let c = n;
    for (let k = 0; k < 8; k++) c = c & 1 ? (c >>> 1) ^ 0x82f63b78 : c >>> 1;
    t[n] = c >>> 0;
  }
  return t;
})();

/**
 * Computes CRC-32C of `bytes`, optionally continuing from a previous result.
 * @param bytes data (not modified)
 * @param previous result of an earlier call on the preceding bytes (default: start fresh)
 * @returns the CRC as an unsigned 32-bit integer
 */
export function crc32c(bytes: Uint8Array, previous = 0): number {
  let c = (previous ^ 0xffffffff) >>> 0;
  for (let i = 0; i < bytes.length; i++) {
    c = (TABLE[(c ^ (bytes[i] ?? 0)) & 0xff] ?? 0) ^ (c >>> 8);
  }
  return (c ^ 0xffffffff) >>> 0;
}
