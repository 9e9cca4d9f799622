import { Link } from 'react-router';
import type uPlot from 'uplot';
import { sortChannels } from '../../../../../shared/channel-order';
import type { BaselineView } from '../../../../../shared/schemas/station';
import { Badge } from '../../../components/ui/badge';
import { EmptyState } from '../../../components/ui/empty-state';
import { FlagMarker } from '../../../components/ui/flag-marker';
import { noiseModelSeries } from '../../../components/ui/noise-model-series';
import { PlotFrame } from '../../../components/ui/plot-frame';
import { StateMarker } from '../../../components/ui/state-marker';
import { Table, TableScroll, TBody, Td, Th, THead, Tr } from '../../../components/ui/table';
import { paths } from '../../../config/paths';
import type { StationHealthView } from '../api/stations';

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
    <TableScroll label="QC findings">
      <Table caption="Quality findings of recent windows" captionHidden>
        <THead>
          <Tr>
            <Th>Window start (UTC)</Th>
            <Th>Channel</Th>
            <Th>Finding</Th>
            <Th>What</Th>
          </Tr>
        </THead>
        <TBody>
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
        </TBody>
      </Table>
    </TableScroll>
  );
}

const sourceWords: Record<BaselineView['source'], string> = {
  dismissed: 'windows an analyst dismissed as noise',
  flagged: 'windows the engine flagged “likely noise” (until enough are dismissed by analysts)',
  none: 'no noise windows yet',
};

/** The station's noise baseline as the score uses it. */
export function BaselineSummary({ baseline }: { baseline: BaselineView }) {
  const f = (v: number) => v.toFixed(3).replace('-', '\u2212');
  return (
    <div className="flex flex-col gap-2">
      <p className="text-sm">
        {baseline.inUse ? (
          <Badge tone="ok">in use</Badge>
        ) : (
          <Badge tone="neutral">
            network default in use ({baseline.count} of {baseline.minWindows} windows)
          </Badge>
        )}{' '}
        {baseline.source === 'none' ? 'No noise windows yet: the score uses the network default.' : `From ${baseline.count} ${baseline.count === 1 ? sourceWords[baseline.source].replace(/^windows/, 'window') : sourceWords[baseline.source]}.`}
      </p>
      {baseline.log10Ratio && baseline.staLtaPeak ? (
        <dl className="grid max-w-lg grid-cols-[auto_1fr_1fr] gap-x-4 gap-y-1 font-mono text-sm">
          <dt className="font-sans text-ink-muted" />
          <dd className="font-sans text-ink-muted">median</dd>
          <dd className="font-sans text-ink-muted">MAD</dd>
          <dt className="font-sans">log10 high/low ratio</dt>
          <dd>{f(baseline.log10Ratio.median)}</dd>
          <dd>{f(baseline.log10Ratio.mad)}</dd>
          <dt className="font-sans">STA/LTA peak</dt>
          <dd>{f(baseline.staLtaPeak.median)}</dd>
          <dd>{f(baseline.staLtaPeak.mad)}</dd>
        </dl>
      ) : null}
      <p className="text-sm text-ink-muted">
        The score is a robust z against these: (x − median) / (1.4826 · MAD). A baseline built from the engine’s own “likely noise” flags can drift with the station (a slowly rising noise floor is
        absorbed as normal); analyst dismissals replace them as soon as there are enough.
      </p>
    </div>
  );
}

/** The station's recent queue items. */
export function RecentItems({ health }: { health: StationHealthView }) {
  if (health.items.length === 0) return <p className="text-sm text-ink-muted">No queue items for this station yet.</p>;
  return (
    <TableScroll label="Recent items">
      <Table caption="Recent queue items of this station" captionHidden>
        <THead>
          <Tr>
            <Th>Item</Th>
            <Th>Window start (UTC)</Th>
            <Th>Flag</Th>
            <Th figure>Score</Th>
            <Th>State</Th>
          </Tr>
        </THead>
        <TBody>
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
        </TBody>
      </Table>
    </TableScroll>
  );
}
