import { useEffect, useMemo, useRef } from 'react';
import type { TracesResponse } from '@shared/schemas/queue';
import { colormapGradient, colormapTable } from '@client/features/review/lib/colormap';

type Sg = NonNullable<TracesResponse['channels'][number]['spectrogram']>;

/**
 * The spectrogram as a heat map on a canvas: time across, frequency up (linear, 0 to the Nyquist
 * frequency), colour = 10·log10 PSD in dB with Seisift's sequential colour map (lightness rises
 * with power, readable without colour), scaled from the 2nd to the 99.5th percentile of the
 * window so one spike does not wash the rest out. A labelled scale sits under it.
 */
export function SpectrogramPanel({ sg, streamId, units, fromS, toS }: { sg: Sg; streamId: string; units: string; fromS: number; toS: number }) {
  const ref = useRef<HTMLCanvasElement>(null);
  const lut = useMemo(() => colormapTable(), []);
  const nf = sg.freqs.length;
  const nt = sg.times.length;
  const [lo, hi] = useMemo(() => {
    const v = sg.db.filter((d) => d > -400).sort((a, b) => a - b);
    return [v[Math.floor(v.length * 0.02)] ?? -1, v[Math.floor(v.length * 0.995)] ?? 0];
  }, [sg.db]);
  useEffect(() => {
    const canvas = ref.current;
    if (!canvas || nt === 0 || nf === 0) return;
    canvas.width = nt;
    canvas.height = nf;
    const ctx = canvas.getContext('2d');
    if (!ctx) return;
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
  }, [sg.db, nt, nf, lo, hi, lut]);
  const t0 = sg.times[0] ?? 0;
  const t1 = sg.times[nt - 1] ?? 0;
  const fmax = sg.freqs[nf - 1] ?? 0;
  // Show only the zoomed span: crop the full-window image with CSS.
  const total = Math.max(1e-9, t1 - t0);
  const left = Math.max(0, (fromS - t0) / total);
  const right = Math.min(1, (toS - t0) / total);
  const scale = 1 / Math.max(0.01, right - left);
  return (
    <figure className="flex flex-col gap-1" aria-label={`Spectrogram of ${streamId}`}>
      <div className="grid grid-cols-[3.5rem_1fr] gap-1">
        <div className="flex flex-col justify-between text-right font-mono text-xs text-ink-muted" aria-hidden="true">
          <span>{fmax.toFixed(0)} Hz</span>
          <span>{(fmax / 2).toFixed(0)} Hz</span>
          <span>0 Hz</span>
        </div>
        <div className="relative h-40 overflow-hidden rounded-xs border border-line">
          <canvas
            ref={ref}
            role="img"
            aria-label={`Spectrogram of ${streamId}: power in dB from ${lo.toFixed(0)} to ${hi.toFixed(0)}, 0 to ${fmax.toFixed(0)} Hz`}
            className="absolute top-0 h-full [image-rendering:pixelated]"
            style={{ width: `${scale * 100}%`, left: `${-left * scale * 100}%` }}
          />
        </div>
      </div>
      <div className="ml-[3.75rem] flex justify-between font-mono text-xs text-ink-muted" aria-hidden="true">
        <span>{Math.max(t0, fromS).toFixed(1)} s</span>
        <span>time from window start</span>
        <span>{Math.min(t1, toS).toFixed(1)} s</span>
      </div>
      <figcaption className="ml-[3.75rem] flex items-center gap-2 text-xs text-ink-muted">
        <span className="font-mono">{lo.toFixed(0)}</span>
        <span className="h-3 w-48 rounded-xs border border-line" style={{ background: colormapGradient() }} aria-hidden="true" />
        <span className="font-mono">{hi.toFixed(0)}</span>
        <span>dB rel 1 ({units})²/Hz · darker = less power, lighter = more</span>
      </figcaption>
    </figure>
  );
}
