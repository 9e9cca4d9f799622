import { describe, expect, it } from 'vitest';
import { crc32c } from '@server/formats/crc32c';

describe('CRC-32C (Castagnoli)', () => {
  it('gives the standard check value for "123456789"', () => {
    // Source: RFC 3720 (iSCSI) / common practice: CRC-32C("123456789") = 0xE3069283.
    expect(crc32c(new TextEncoder().encode('123456789'))).toBe(0xe3069283);
  });

  it('matches the RFC 3720 appendix B.4 test vectors', () => {
    // Source: RFC 3720 section B.4 (from memory): 32 bytes of zeros → 0x8A9136AA,
    // 32 bytes of 0xFF → 0x62A8AB43, bytes 0x00..0x1F ascending → 0x46DD794E.
    expect(crc32c(new Uint8Array(32))).toBe(0x8a9136aa);
    expect(crc32c(new Uint8Array(32).fill(0xff))).toBe(0x62a8ab43);
    expect(crc32c(Uint8Array.from({ length: 32 }, (_, i) => i))).toBe(0x46dd794e);
  });

  it('continues across chunks', () => {
    const bytes = new TextEncoder().encode('Kestrel Valley network XX');
    expect(crc32c(bytes.subarray(10), crc32c(bytes.subarray(0, 10)))).toBe(crc32c(bytes));
    expect(crc32c(new Uint8Array(0))).toBe(0);
  });
});
