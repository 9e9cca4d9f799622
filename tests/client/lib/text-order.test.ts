import { describe, expect, it } from 'vitest';
import { compareCodes, formatCount } from '@client/lib/text-order';

describe('counts and codes without Intl', () => {
  it('writes counts as English does (checked against Intl, the reference here)', () => {
    const en = new Intl.NumberFormat('en');
    for (const n of [0, 7, 999, 1000, 12_345, 999_999, 1_000_000, 1_234_567_890, -4_200]) expect(formatCount(n)).toBe(en.format(n));
  });
  it('orders FDSN codes as a byte-wise sort does', () => {
    const ids = ['XX.KV10.00.HHZ', 'XX.KV02.00.HHN', 'XX.KV02.00.HHE', 'XX.KV02.00.HHZ', 'XX.KV01.10.HHZ', 'XX.KV01.00.HHZ'];
    expect([...ids].sort(compareCodes)).toEqual([...ids].sort());
    expect(compareCodes('KV01', 'KV01')).toBe(0);
  });
});
