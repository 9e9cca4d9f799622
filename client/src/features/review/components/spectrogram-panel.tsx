import { useCallback, useMemo } from 'react';
import type uPlot from 'uplot';
import type { TracesResponse } from '@shared/schemas/queue';
import { PlotFrame } from '@client/components/ui/plot-frame';
import { colormapGradient } from '@client/features/review/lib/colormap';
import { spectrogramPicture } from '@client/features/review/lib/spectrogram-picture';
import { spectrogramExtent } from '@client/features/review/lib/spectrogram-geometry';
import { selectToZoom } from '@client/features/review/lib/select-zoom';
import { traceYAxisSizePx } from '@client/features/review/components/trace-panel';

type Sg = NonNullable<TracesResponse['channels'][number]['spectrogram']>;

/** Props of <SpectrogramPanel>. */
export type SpectrogramPanelProps = {
  sg: Sg;
  streamId: string;
  units: string;
  /** The traces' time points, s from the window start: the spectrogram uses the same time axis. */
  times: readonly number[];
  /** The cursor link of the traces (uPlot sync key). */
  syncKey: string;
  /** A drag across the spectrogram zooms the traces too. */
  onZoom: (from: number, to: number) => void;
};

/**
 * The spectrogram as a heat map under the lead trace: time across on the traces' own time axis
 * (same points, same amplitude-axis width, same cursor link and zoom, so a time sits at the same
 * pixel as on the traces), frequency up (linear, 0 to the Nyquist frequency), colour = 10·log10
 * PSD in dB with Seisift's sequential colour map (lightness rises with power, readable without
 * colour), scaled from the 2nd to the 99.5th percentile of the window so one spike does not wash
 * the rest out. Each column is drawn over its own segment's span (lib/spectrogram-geometry.ts).
 */
export function SpectrogramPanel({ sg, streamId, units, times, syncKey, onZoom }: SpectrogramPanelProps) {
  const nf = sg.freqs.length;
  // Made once per spectrogram (lib/spectrogram-picture.ts), usually while the page was idle after the prefetch.
  const { lo, hi, image } = useMemo(() => spectrogramPicture(sg), [sg]);
  const extent = useMemo(() => (sg.times.length > 0 && nf > 1 ? spectrogramExtent(sg.times, sg.freqs) : null), [sg.times, sg.freqs, nf]);
  const fmax = sg.freqs[nf - 1] ?? 0;
  const x = useMemo(() => ({ label: 'Time from window start', unit: 's', values: Array.from(times) }), [times]);
  const configure = useCallback(
    (o: uPlot.Options): uPlot.Options => ({
      ...o,
      scales: { ...o.scales, y: { ...o.scales?.y, auto: false, range: [0, fmax] } },
      axes: [o.axes?.[0] ?? {}, { ...o.axes?.[1], size: traceYAxisSizePx }],
      cursor: { ...o.cursor, sync: { key: syncKey, setSeries: false } },
      hooks: {
        ...o.hooks,
        draw: [
          (u: uPlot) => {
            if (!image || !extent) return;
            const { top, left, width, height } = u.bbox;
            const x0 = u.valToPos(extent.fromS, 'x', true);
            const x1 = u.valToPos(extent.toS, 'x', true);
            const yTop = u.valToPos(extent.toHz, 'y', true);
            const yBottom = u.valToPos(extent.fromHz, 'y', true);
            const ctx = u.ctx;
            ctx.save();
            ctx.beginPath();
            ctx.rect(left, top, width, height);
            ctx.clip();
            ctx.imageSmoothingEnabled = false;
            ctx.drawImage(image, x0, yTop, x1 - x0, yBottom - yTop);
            ctx.restore();
            // For tests (the canvas cannot be read): the time range of the axis and where the image sits on it.
            u.root.dataset.xRange = `${u.scales.x?.min ?? ''} ${u.scales.x?.max ?? ''}`;
            u.root.dataset.imageSpan = `${extent.fromS} ${extent.toS}`;
          },
        ],
        setSelect: [
          selectToZoom(onZoom),
        ],
      },
    }),
    [fmax, syncKey, image, extent, onZoom],
  );
  return (
    <div className="flex flex-col gap-1" data-testid="spectrogram">
      <PlotFrame
        title={`Spectrogram of ${streamId}`}
        description={`Spectrogram of ${streamId}: power in dB from ${lo.toFixed(0)} to ${hi.toFixed(0)}, 0 to ${fmax.toFixed(0)} Hz, on the traces' time axis`}
        x={x}
        y={{ label: 'Frequency', unit: 'Hz' }}
        series={[]}
        height={104}
        configure={configure}
      />
      <p className="flex items-center gap-2 pl-[3.75rem] text-xs text-ink-muted">
        <span className="font-mono">{lo.toFixed(0)}</span>
        <span className="h-3 w-48 rounded-xs border border-line" style={{ background: colormapGradient() }} aria-hidden="true" />
        <span className="font-mono">{hi.toFixed(0)}</span>
        <span>dB rel 1 ({units})²/Hz · darker = less power, lighter = more</span>
      </p>
    </div>
  );
}
