/**
 * Seisift's sequential colour map for heat maps (spectrogram), computed here rather than copied:
 * perceptual lightness rises linearly from dark to light, so the map reads the same in greyscale
 * and for the common colour-vision deficiencies (monotonic lightness is the usual rule for
 * colour-blind-safe sequential maps, common practice), while the hue turns from blue-violet
 * through teal and green to yellow for extra separation.
 *
 * Colours are made in OKLab (Björn Ottosson, "A perceptual color space for image processing",
 * 2020, bottosson.github.io/posts/oklab — the matrices below are from that post) and converted to
 * sRGB (IEC 61966-2-1 transfer curve). Out-of-gamut colours get their chroma reduced until they fit.
 */

/** OKLab → linear sRGB (Ottosson 2020). */
function oklabToLinearSrgb(L: number, a: number, b: number): [number, number, number] {
  const l_ = L + 0.3963377774 * a + 0.2158037573 * b;
  const m_ = L - 0.1055613458 * a - 0.0638541728 * b;
  const s_ = L - 0.0894841775 * a - 1.291485548 * b;
  const l = l_ ** 3;
  const m = m_ ** 3;
  const s = s_ ** 3;
  return [
    4.0767416621 * l - 3.3077115913 * m + 0.2309699292 * s,
    -1.2684380046 * l + 2.6097574011 * m - 0.3413193965 * s,
    -0.0041960863 * l - 0.7034186147 * m + 1.707614701 * s,
  ];
}

/** Linear → gamma-encoded sRGB component (IEC 61966-2-1), 0..1. */
function encodeSrgb(c: number): number {
  return c <= 0.0031308 ? 12.92 * c : 1.055 * c ** (1 / 2.4) - 0.055;
}

/**
 * The map's colour at `t` ∈ [0, 1] (clamped) as [r, g, b] bytes. Lightness L = 0.27 + 0.66·t
 * (OKLab L); hue 285° → 100° and chroma 0.09 → 0.17 along t.
 */
export function colormapRgb(t: number): [number, number, number] {
  const u = Math.min(1, Math.max(0, Number.isFinite(t) ? t : 0));
  const L = 0.27 + 0.66 * u;
  const hue = ((285 - 185 * u) * Math.PI) / 180;
  let chroma = 0.09 + 0.08 * u;
  for (let k = 0; k < 40; k++) {
    const rgb = oklabToLinearSrgb(L, chroma * Math.cos(hue), chroma * Math.sin(hue));
    if (rgb.every((c) => c >= -1e-6 && c <= 1 + 1e-6)) {
      return rgb.map((c) => Math.round(255 * encodeSrgb(Math.min(1, Math.max(0, c))))) as [number, number, number];
    }
    chroma *= 0.92;
  }
  const grey = Math.round(255 * encodeSrgb(L ** 3));
  return [grey, grey, grey];
}

/** A 256-entry lookup table of `colormapRgb` (RGBA bytes), for drawing pixels fast. */
export function colormapTable(): Uint8ClampedArray {
  const out = new Uint8ClampedArray(256 * 4);
  for (let i = 0; i < 256; i++) {
    const [r, g, b] = colormapRgb(i / 255);
    out.set([r, g, b, 255], i * 4);
  }
  return out;
}

/** CSS linear-gradient stops of the map, left (low) to right (high), for the colour scale. */
export function colormapGradient(steps = 12): string {
  const stops = Array.from({ length: steps + 1 }, (_, i) => {
    const [r, g, b] = colormapRgb(i / steps);
    return `rgb(${r} ${g} ${b}) ${((100 * i) / steps).toFixed(1)}%`;
  });
  return `linear-gradient(to right, ${stops.join(', ')})`;
}
