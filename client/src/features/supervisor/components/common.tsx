import type { ReactNode } from 'react';
import type uPlot from 'uplot';
import type { LiveState } from '../../../lib/ws-client';

/** The sentence every supervisor screen that shows event times carries. */
export const noLocationText = 'Seisift does not yet locate events or compute magnitudes: times shown are station times (earliest P pick, else earliest trigger), not origin times.';

/**
 * A supervisor screen's frame: title, one line of purpose, then the content. The shell shows the
 * live connection; a screen with a live client of its own says only when that one is not live.
 */
export function SupervisorPage({ title, summary, live, children, actions }: { title: string; summary: ReactNode; live?: LiveState; children: ReactNode; actions?: ReactNode }) {
  return (
    <div className="flex flex-col gap-4 p-4">
      <header className="flex flex-wrap items-baseline gap-x-4 gap-y-1">
        <h1 className="text-xl font-semibold">{title}</h1>
        <p className="text-sm text-ink-muted">{summary}</p>
        <div className="ml-auto flex items-center gap-3">
          {actions}
          {live && live !== 'live' ? (
            <span role="status" className="text-sm text-warn">
              {live === 'offline' ? 'Live updates offline; retrying…' : 'Connecting live updates…'}
            </span>
          ) : null}
        </div>
      </header>
      {children}
    </div>
  );
}

/** A small labelled section. */
export function Section({ title, children, className }: { title: string; children: ReactNode; className?: string }) {
  return (
    <section aria-label={title} className={className}>
      <h2 className="mb-2 text-base font-semibold">{title}</h2>
      {children}
    </section>
  );
}

/** An error line from a failed call. */
export function ErrorLine({ error }: { error: unknown }) {
  if (!error) return null;
  return (
    <p role="alert" className="text-sm text-danger">
      {error instanceof Error ? error.message : 'Something went wrong'}
    </p>
  );
}

/** ISO day N days before today (UTC), at 00:00. */
export function daysAgoIso(n: number, now = new Date()): string {
  const d = new Date(Date.UTC(now.getUTCFullYear(), now.getUTCMonth(), now.getUTCDate()) - n * 86_400_000);
  return d.toISOString();
}

/** A date input's value (YYYY-MM-DD, read as a UTC day) as ISO UTC midnight. */
export function dayToIso(value: string): string {
  return `${value}T00:00:00.000Z`;
}

/**
 * PlotFrame `configure` that also draws each value as a point, so a day standing alone between
 * gaps (no line to draw) is still seen. Module-level, hence stable for PlotFrame's memo.
 */
export function withPoints(options: uPlot.Options): uPlot.Options {
  return { ...options, series: options.series.map((s, i) => (i === 0 ? s : { ...s, points: { show: true, size: 6 } })) };
}

/** `withPoints`, with the y scale fixed to 0…1 (shares such as precision and recall). */
export function withPointsShare(options: uPlot.Options): uPlot.Options {
  const o = withPoints(options);
  return { ...o, scales: { ...o.scales, y: { ...o.scales?.y, range: [0, 1] } } };
}
