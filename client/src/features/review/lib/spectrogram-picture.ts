import type { TracesResponse } from '@shared/schemas/queue';
import { colormapTable } from '@client/features/review/lib/colormap';
import { whenIdle } from '@client/lib/when-idle';

type Sg = NonNullable<TracesResponse['channels'][number]['spectrogram']>;

/** A spectrogram ready to draw: its colour scale's ends (dB) and its image (null where no canvas exists). */
export type SpectrogramPicture = { lo: number; hi: number; image: HTMLCanvasElement | null };

/**
 * The colour scale's ends of a spectrogram, dB: the 2nd and 99.5th percentiles of its finite
 * values (values at or below −400 dB, the engine's floor for an empty bin, are left out), so one
 * spike does not wash the rest out. Nearest-rank percentiles (index ⌊q·n⌋ of the sorted values).
 */
export function spectrogramScale(db: readonly number[]): { lo: number; hi: number } {
  const v = Float64Array.from(db.filter((d) => d > -400)).sort();
  return { lo: v[Math.floor(v.length * 0.02)] ?? -1, hi: v[Math.floor(v.length * 0.995)] ?? 0 };
}

let lut: Uint8ClampedArray | null = null;

/** The image of the spectrogram, one pixel per column and bin (low frequencies at the bottom). */
function renderImage(sg: Sg, lo: number, hi: number): HTMLCanvasElement | null {
  const nf = sg.freqs.length;
  const nt = sg.times.length;
  if (nt === 0 || nf === 0 || typeof document === 'undefined') return null;
  const canvas = document.createElement('canvas');
  canvas.width = nt;
  canvas.height = nf;
  const ctx = canvas.getContext('2d');
  if (!ctx) return null;
  lut ??= colormapTable();
  const img = ctx.createImageData(nt, nf);
  const span = hi - lo || 1;
  for (let j = 0; j < nt; j++) {
    for (let k = 0; k < nf; k++) {
      const d = sg.db[j * nf + k] ?? lo;
      const idx = Math.max(0, Math.min(255, Math.round(((d - lo) / span) * 255)));
      const o = ((nf - 1 - k) * nt + j) * 4;
      img.data[o] = lut[idx * 4] ?? 0;
      img.data[o + 1] = lut[idx * 4 + 1] ?? 0;
      img.data[o + 2] = lut[idx * 4 + 2] ?? 0;
      img.data[o + 3] = 255;
    }
  }
  ctx.putImageData(img, 0, 0);
  return canvas;
}

/** Pictures already made, by the spectrogram object of the cached traces answer (dropped with it). */
const pictures = new WeakMap<Sg, SpectrogramPicture>();

/** The picture of `sg`: made once per spectrogram object and kept while that object lives. */
export function spectrogramPicture(sg: Sg): SpectrogramPicture {
  const known = pictures.get(sg);
  if (known) return known;
  const { lo, hi } = spectrogramScale(sg.db);
  const made = { lo, hi, image: renderImage(sg, lo, hi) };
  pictures.set(sg, made);
  return made;
}

/**
 * Makes, when the page is idle, the spectrogram picture the review screen shows first for these
 * traces (its first channel in display order, the one SpectrogramPanel opens on), so that opening a
 * prefetched item does not spend its first frame on it.
 * @param first the channel shown first (the caller's channel order)
 */
export function preparePictureWhenIdle(first: TracesResponse['channels'][number] | undefined): void {
  const sg = first?.spectrogram;
  if (!sg || pictures.has(sg)) return;
  whenIdle(() => void spectrogramPicture(sg));
}
