import { describe, expect, it } from 'vitest';
import { colormapRgb, colormapTable } from '@client/features/review/lib/colormap';

/** WCAG 2.x relative luminance of an sRGB colour (W3C WCAG 2.2, "relative luminance" definition). */
function luminance([r, g, b]: [number, number, number]): number {
  const lin = (c: number) => {
    const s = c / 255;
    return s <= 0.04045 ? s / 12.92 : ((s + 0.055) / 1.055) ** 2.4;
  };
  return 0.2126 * lin(r) + 0.7152 * lin(g) + 0.0722 * lin(b);
}

describe('spectrogram colour map', () => {
  it('luminance rises strictly from low to high power (reads in greyscale; monotonic lightness is common practice for colour-blind-safe sequential maps)', () => {
    const ls = Array.from({ length: 64 }, (_, i) => luminance(colormapRgb(i / 63)));
    for (let i = 1; i < ls.length; i++) expect(ls[i]).toBeGreaterThan(ls[i - 1] ?? 0);
    // Ends far apart: WCAG contrast ratio (L1 + 0.05) / (L2 + 0.05) between the ends above 7:1.
    expect(((ls[63] ?? 0) + 0.05) / ((ls[0] ?? 0) + 0.05)).toBeGreaterThan(7);
  });

  it('clamps out-of-range input and fills a 256-entry RGBA table', () => {
    expect(colormapRgb(-1)).toEqual(colormapRgb(0));
    expect(colormapRgb(2)).toEqual(colormapRgb(1));
    expect(colormapRgb(Number.NaN)).toEqual(colormapRgb(0));
    const t = colormapTable();
    expect(t).toHaveLength(1024);
    expect(Array.from(t.subarray(1020, 1024))).toEqual([...colormapRgb(1), 255]);
  });
});
