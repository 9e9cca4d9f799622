import { describe, expect, it } from 'vitest';
import { spectrogramExtent } from '@client/features/review/lib/spectrogram-geometry';

describe('spectrogramExtent', () => {
  it('puts each column over its own hop (hand-worked: 12 000 samples at 100 Hz, 256-sample segments, 128-sample hop)', () => {
    // Column j starts at sample 128·j and is centred at (128·j + 128)/100 s; the last full
    // segment starts at 128·91 = 11 648 (11 648 + 256 ≤ 12 000), so 92 columns, 1.28 s … 117.76 s.
    const times = Array.from({ length: 92 }, (_, j) => (128 * j + 128) / 100);
    // Bins 100/256 Hz apart up to the Nyquist frequency, 50 Hz (129 bins).
    const freqs = Array.from({ length: 129 }, (_, k) => (k * 100) / 256);
    const e = spectrogramExtent(times, freqs);
    expect(e.fromS).toBeCloseTo(0.64, 12);
    expect(e.toS).toBeCloseTo(118.4, 12);
    expect(e.fromHz).toBeCloseTo(-50 / 256, 12);
    expect(e.toHz).toBeCloseTo(50 + 50 / 256, 12);
  });

  it('gives a lone column one segment’s length, 1/df s', () => {
    // 64-sample segment at 100 Hz: bins 1.5625 Hz apart, 0.64 s long, centred at 0.32 s.
    const freqs = Array.from({ length: 33 }, (_, k) => k * 1.5625);
    const e = spectrogramExtent([0.32], freqs);
    expect(e.fromS).toBeCloseTo(0, 12);
    expect(e.toS).toBeCloseTo(0.64, 12);
  });

  it('refuses an empty spectrogram', () => {
    expect(() => spectrogramExtent([], [0, 1])).toThrow(RangeError);
    expect(() => spectrogramExtent([1], [0])).toThrow(/two frequencies/);
  });
});
