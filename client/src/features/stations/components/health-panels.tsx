import { Link } from 'react-router';
import type uPlot from 'uplot';
import { sortChannels } from '@shared/channel-order';
import { Badge } from '@client/components/ui/badge';
import { EmptyState } from '@client/components/ui/empty-state';
import { FlagMarker } from '@client/components/ui/flag-marker';
import { noiseModelSeries } from '@client/components/ui/noise-model-series';
import { PlotFrame } from '@client/components/ui/plot-frame';
import { StateMarker } from '@client/components/ui/state-marker';
import { ScrollTable, Td, Th, Tr } from '@client/components/ui/table';
import { paths } from '@client/config/paths';
import type { StationHealthView } from '@client/features/stations/api/stations';

const fmtHz = (v: number) => (v >= 1 ? String(Number(v.toPrecision(3))) : String(Number(v.toPrecision(2))));
const fmtDb = (v: number) => `${Math.round(v)}`.replace('-', '\u2212');

/**
 * The latest PSD of each channel against Peterson's (1993) NLNM and NHNM: log frequency axis, dB.
 * A channel without a sensitivity is shown in counts, without the models (they are in acceleration).
 */
export function PsdPlots({ health }: { health: StationHealthView }) {
  if (health.psd.length === 0) {
    return <EmptyState title="No spectrum yet">Upload a window for this station; its latest spectrum per channel appears here.</EmptyState>;
  }
  return (
    <div className="grid gap-4 lg:grid-cols-2">
      {/* One channel order everywhere (Z, N, E, then others): shared/channel-order.ts. */}
      {sortChannels(health.psd, (c) => c.streamId).map((c) => {
        const series = c.physical
          ? [
              { label: c.streamId, values: c.db, styleIndex: 0 },
              // The same look as on the review spectrum (one helper for both).
              ...noiseModelSeries(c.nlnm, c.nhnm),
            ]
          : [{ label: `${c.streamId} (counts)`, values: c.db, styleIndex: 0 }];
        return (
          <figure key={c.streamId} className="flex flex-col gap-1">
            <PlotFrame
              title={`${c.streamId} — power spectral density`}
              description={`Welch PSD of the window starting ${c.windowStart}, ${c.units}, on a logarithmic frequency axis${c.physical ? ', with the NLNM and NHNM noise models' : ''}.`}
              x={{ label: 'Frequency', unit: 'Hz', log: true, values: c.freqs, format: fmtHz }}
              y={{ label: 'PSD', unit: c.physical ? 'dB rel 1 (m/s²)²/Hz' : 'dB rel 1 counts²/Hz', format: fmtDb }}
              series={series}
              height={240}
            />
            <figcaption className="text-sm text-ink-muted">
              Window of <span className="font-mono">{c.windowStart}</span>.{' '}
              {c.physical
                ? 'Acceleration PSD from the channel’s sensitivity; the models are defined for periods of 0.1 s and longer (10 Hz and below).'
                : 'No sensitivity is registered for this channel, so it is shown in counts and cannot be compared with the noise models.'}
            </figcaption>
          </figure>
        );
      })}
    </div>
  );
}

/** Trend plot options: wide spacing for the date ticks, and a point per window (few windows draw a line otherwise). */
function trendOptions(o: uPlot.Options): uPlot.Options {
  const [xAxis, ...rest] = o.axes ?? [];
  return {
    ...o,
    axes: [{ ...xAxis, space: 120 }, ...rest],
    series: o.series.map((s, i) => (i === 0 ? s : { ...s, points: { show: true, size: 6 } })),
  };
}

/** The noise level per window (median PSD over 1–5 Hz of the lead channel) over the days up to the latest window. */
export function NoiseTrend({ health }: { health: StationHealthView }) {
  const points = health.trend.filter((t) => t.db !== null);
  if (points.length < 2) {
    return <p className="text-sm text-ink-muted">The trend needs at least two windows with a 1–5 Hz spectrum in the {health.days} days up to the latest window.</p>;
  }
  const units = points[0]?.units ?? 'dB';
  const x = points.map((p) => Date.parse(p.windowStart) / 1000);
  return (
    <PlotFrame
      title="Noise level per window, 1–5 Hz"
      description={`Median PSD between 1 and 5 Hz of each window's lead channel over the ${health.days} days up to the latest window, ${units}.`}
      x={{ label: 'Window start', unit: 'UTC', values: x, format: (v) => new Date(v * 1000).toISOString().slice(5, 16).replace('T', ' ') }}
      y={{ label: 'PSD 1–5 Hz', unit: units.replace(/^dB /, 'dB rel 1 '), format: fmtDb }}
      series={[{ label: 'median PSD 1–5 Hz of the lead channel', values: points.map((p) => p.db) }]}
      height={240}
      configure={trendOptions}
    />
  );
}

/** QC findings (warnings and errors) of the recent windows. */
export function QcFindings({ health }: { health: StationHealthView }) {
  if (health.qc.length === 0) return <p className="text-sm text-ink-muted">No gaps, clipping, dead channels or other findings in the {health.days} days up to the latest window.</p>;
  return (
    <ScrollTable
      label="QC findings" caption="Quality findings of recent windows" captionHidden
      head={
        <Tr>
          <Th>Window start (UTC)</Th>
          <Th>Channel</Th>
          <Th>Finding</Th>
          <Th>What</Th>
        </Tr>
      }
    >
      {health.qc.slice(0, 100).map((f, i) => (
        <Tr key={`${f.windowId}-${f.streamId}-${f.code}-${i}`}>
          <Td className="font-mono text-sm">{f.windowStart}</Td>
          <Td className="font-mono text-sm">{f.streamId}</Td>
          <Td>
            <Badge tone={f.severity === 'error' ? 'danger' : 'warn'}>
              {f.severity}: {f.code}
            </Badge>
          </Td>
          <Td className="text-sm">{f.message}</Td>
        </Tr>
      ))}
    </ScrollTable>
  );
}

/** The station's recent queue items. */
export function RecentItems({ health }: { health: StationHealthView }) {
  if (health.items.length === 0) return <p className="text-sm text-ink-muted">No queue items for this station yet.</p>;
  return (
    <ScrollTable
      label="Recent items" caption="Recent queue items of this station" captionHidden
      head={
        <Tr>
          <Th>Item</Th>
          <Th>Window start (UTC)</Th>
          <Th>Flag</Th>
          <Th figure>Score</Th>
          <Th>State</Th>
        </Tr>
      }
    >
      {health.items.map((it) => (
        <Tr key={it.id}>
          <Td className="font-mono">
            <Link to={`${paths.queueItem.href}/${it.id}`}>{it.id}</Link>
          </Td>
          <Td className="font-mono text-sm">{it.windowStart}</Td>
          <Td>
            <FlagMarker flag={it.flag} />
          </Td>
          <Td figure>{it.score.toFixed(1)}</Td>
          <Td>
            <StateMarker state={it.state} />
          </Td>
        </Tr>
      ))}
    </ScrollTable>
  );
}
