import { useCallback, useMemo } from 'react';
import type uPlot from 'uplot';
import { noiseModelSeries } from '@client/components/ui/noise-model-series';
import { PlotFrame } from '@client/components/ui/plot-frame';
import type { AnalysisView } from '@client/features/review/api/get-item';

type Channel = AnalysisView['channels'][number];

/**
 * The channel's Welch PSD (as the engine computed it) on log–log axes with the low and high bands
 * shaded (low: hatched, high: solid wash — told apart without colour, and named in the legend
 * line above). With a sensitivity the plot shows the acceleration PSD in dB rel 1 (m/s²)²/Hz with
 * Peterson's (1993) NLNM and NHNM from the engine (server/dsp/noise-models.ts); without one, the
 * PSD in counts²/Hz and no noise models (they need physical units).
 */
export function SpectrumPanel({ channel }: { channel: Channel }) {
  const nm = channel.noiseModels;
  const keep = useMemo(() => channel.psd.freqs.map((f, i) => (f > 0 ? i : -1)).filter((i) => i >= 0), [channel.psd.freqs]);
  const x = useMemo(() => ({ label: 'Frequency', unit: 'Hz', log: true, values: keep.map((i) => channel.psd.freqs[i] ?? 0) }), [keep, channel.psd.freqs]);
  const series = useMemo(() => {
    if (nm) {
      return [
        { label: 'acceleration PSD', values: keep.map((i) => nm.accelerationDb[i] ?? null), styleIndex: 0 },
        // The same look as on the station page (one helper for both).
        ...noiseModelSeries(
          keep.map((i) => nm.nlnmDb[i] ?? null),
          keep.map((i) => nm.nhnmDb[i] ?? null),
        ),
      ];
    }
    return [{ label: `PSD (${channel.psd.units})`, values: keep.map((i) => { const v = channel.psd.values[i] ?? 0; return v > 0 ? v : null; }), styleIndex: 0 }];
  }, [nm, keep, channel.psd.values, channel.psd.units]);
  const { low, high } = channel.bands;
  const configure = useCallback(
    (o: uPlot.Options): uPlot.Options => ({
      ...o,
      hooks: {
        ...o.hooks,
        drawClear: [
          (u: uPlot) => {
            const ctx = u.ctx;
            const { top, height } = u.bbox;
            const ratio = window.devicePixelRatio || 1;
            const band = (fmin: number, fmax: number, hatch: boolean) => {
              const x0 = u.valToPos(fmin, 'x', true);
              const x1 = u.valToPos(fmax, 'x', true);
              ctx.save();
              ctx.fillStyle = 'rgba(127,127,127,0.14)';
              ctx.fillRect(x0, top, x1 - x0, height);
              if (hatch) {
                ctx.beginPath();
                ctx.rect(x0, top, x1 - x0, height);
                ctx.clip();
                ctx.strokeStyle = 'rgba(127,127,127,0.45)';
                ctx.lineWidth = ratio;
                for (let xx = x0 - height; xx < x1; xx += 8 * ratio) {
                  ctx.moveTo(xx, top + height);
                  ctx.lineTo(xx + height, top);
                }
                ctx.stroke();
              }
              ctx.restore();
            };
            band(low.fmin, low.fmax, true);
            band(high.fmin, high.fmax, false);
          },
        ],
      },
    }),
    [low.fmin, low.fmax, high.fmin, high.fmax],
  );
  return (
    <div className="flex flex-col gap-1">
      <p className="text-sm text-ink-muted">
        Shaded: low band {low.fmin}–{low.fmax} Hz (hatched), high band {high.fmin}–{high.fmax} Hz (plain).{' '}
        {nm ? 'Noise models need the sensitivity, which this station has.' : 'No sensitivity for this channel, so no NLNM/NHNM (they need m/s²).'}
      </p>
      <PlotFrame
        title={`Spectrum of ${channel.id}`}
        description={`Welch power spectral density of ${channel.id}${nm ? ' as acceleration in dB with the Peterson noise models' : ''}; bands shaded`}
        x={x}
        y={nm ? { label: 'PSD', unit: 'dB rel 1 (m/s²)²/Hz' } : { label: 'PSD', unit: channel.psd.units, log: true }}
        series={series}
        height={220}
        configure={configure}
      />
    </div>
  );
}
