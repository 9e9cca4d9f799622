import { describe, expect, it } from 'vitest';
import { formatSi, niceTicks, siPrefixFor, siTickLabels, symmetricRange } from '@client/features/review/lib/amplitude';

// Prefix symbols and powers: BIPM, The International System of Units (SI), 9th ed. 2019, table 7.
describe('SI amplitude labels', () => {
  it('picks the prefix of each power-of-1000 range', () => {
    expect(siPrefixFor(999).symbol).toBe('');
    expect(siPrefixFor(1000).symbol).toBe('k');
    expect(siPrefixFor(-2.5e6).symbol).toBe('M');
    expect(siPrefixFor(3.4e-6).symbol).toBe('µ');
    expect(siPrefixFor(2e-10).symbol).toBe('n');
    expect(siPrefixFor(0).symbol).toBe('');
  });

  it('writes single values with 3 significant digits and a true minus', () => {
    expect(formatSi(1234)).toBe('1.23k');
    expect(formatSi(-3400)).toBe('\u22123.4k');
    expect(formatSi(-0.0000034)).toBe('\u22123.4µ');
    expect(formatSi(999.6)).toBe('1k');
    expect(formatSi(0)).toBe('0');
  });

  it('labels an axis with one prefix and the fewest exact decimals', () => {
    expect(siTickLabels([-2000, 0, 2000])).toEqual(['\u22122k', '0', '2k']);
    expect(siTickLabels([-1.5e-6, 0, 1.5e-6])).toEqual(['\u22121.5µ', '0', '1.5µ']);
    expect(siTickLabels([-500, 0, 500, 1000])).toEqual(['\u22120.5k', '0', '0.5k', '1.0k']);
    expect(siTickLabels([0, 20, 40])).toEqual(['0', '20', '40']);
    expect(siTickLabels([null, 5])).toEqual(['', '5']);
  });
});

describe('niceTicks', () => {
  // The 1-2-5 step series of chart axes (common practice); values worked by hand.
  it('spans ±2.2e-6 with steps of 2e-6 at 3 ticks and 1e-6 at 5', () => {
    const t3 = niceTicks(-2.2e-6, 2.2e-6, 3);
    expect(t3.map((v) => v / 2e-6)).toEqual([-1, 0, 1].map((k) => expect.closeTo(k, 9)));
    expect(niceTicks(-2.2e-6, 2.2e-6, 5).length).toBe(5);
  });
  it('spans 0..25 with step 10 at 3 ticks, and refuses an empty range', () => {
    expect(niceTicks(0, 25, 3)).toEqual([0, 10, 20]);
    expect(niceTicks(1, 1, 3)).toEqual([]);
  });
});

describe('symmetricRange', () => {
  // Hand-worked: a = 1.05·2.4 = 2.52, step = niceStep(1.26) = 2, half = ceil(1.26)·2 = 4.
  it('ends on a tick so a small panel always has ±half and 0', () => {
    expect(symmetricRange(-2.4, 1)).toEqual([-4, 4]);
    expect(niceTicks(-4, 4, 4)).toEqual([-4, -2, 0, 2, 4]);
    // a = 1.05·0.9 = 0.945, step = niceStep(0.4725) = 0.5, half = 2·0.5 = 1.
    expect(symmetricRange(-0.9, 0.9)).toEqual([-1, 1]);
    expect(symmetricRange(0, 0)).toEqual([-1, 1]);
  });
});
