import type { ReactNode } from 'react';
import type uPlot from 'uplot';
import type { LiveState } from '@client/lib/ws-client';

/**
 * A supervisor screen's frame: title, one line of purpose, then the content. The shell shows the
 * live connection; a screen with a live client of its own says only when that one is not live.
 */
export function SupervisorPage({ title, summary, live, children, actions }: { title: string; summary: ReactNode; live?: LiveState; children: ReactNode; actions?: ReactNode }) {
  return (
    <div className="flex flex-col gap-4">
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

const DAY_S = 86_400;

/** A period [from, to) as ISO 8601 UTC times, and what it was chosen from. */
export type DefaultPeriod = {
  from: string;
  to: string;
  /** 'data': the days up to the latest window with items; 'clock': the days up to today (no items yet). */
  basis: 'data' | 'clock';
  days: number;
};

/**
 * The period a screen opens on: the `days` UTC days up to and including the day of the latest
 * window (so a demo dated 2026-03-14, or a network that stopped sending, opens on its data), or,
 * with no items at all, the `days` days up to and including today.
 * @param latestIso window start of the latest item (ISO 8601 UTC), or null when there is none
 * @param days length of the period in whole UTC days (≥ 1)
 * @param now the clock (for the no-data case)
 */
export function periodUpToLatest(latestIso: string | null, days: number, now = new Date()): DefaultPeriod {
  const latest = latestIso === null ? Number.NaN : Date.parse(latestIso);
  const basis = Number.isNaN(latest) ? 'clock' : 'data';
  const anchor = basis === 'data' ? new Date(latest) : now;
  const toMs = Date.UTC(anchor.getUTCFullYear(), anchor.getUTCMonth(), anchor.getUTCDate()) + DAY_S * 1000;
  return { from: new Date(toMs - days * DAY_S * 1000).toISOString(), to: new Date(toMs).toISOString(), basis, days };
}

/**
 * The line a screen shows for its default period, e.g. "latest 7 days with items: 2026-03-08 to
 * 2026-03-14 (UTC days)". The last day named is the one before `to` (the period excludes `to`).
 * @param where e.g. a station ("… with items at XX.KV01: …")
 */
export function periodText(p: DefaultPeriod, where?: string): string {
  const first = p.from.slice(0, 10);
  const last = new Date(Date.parse(p.to) - DAY_S * 1000).toISOString().slice(0, 10);
  const span = `${first} to ${last} (UTC days)`;
  const at = where ? ` at ${where}` : '';
  return p.basis === 'data' ? `latest ${p.days} days with items${at}: ${span}` : `last ${p.days} days (no items${at} yet): ${span}`;
}

/**
 * The x range of a per-day chart, in seconds (uPlot's time unit): half a day of room either side
 * of the first and last day, and at least `minDays` days wide (centred), so one day alone sits in
 * the middle of a few labelled days instead of on a scale of fractions.
 */
export function dayRange(minS: number, maxS: number, minDays = 3): [number, number] {
  let lo = minS - DAY_S / 2;
  let hi = maxS + DAY_S / 2;
  const want = minDays * DAY_S;
  if (hi - lo < want) {
    const mid = (lo + hi) / 2;
    lo = mid - want / 2;
    hi = mid + want / 2;
  }
  return [lo, hi];
}

/**
 * Tick positions of a per-day chart: UTC midnights (seconds) inside [minS, maxS], every 1, 2, 7,
 * 14 or 28 days so that at most `maxTicks` fit.
 */
export function daySplits(minS: number, maxS: number, maxTicks = 10): number[] {
  const first = Math.ceil(minS / DAY_S);
  const last = Math.floor(maxS / DAY_S);
  const step = [1, 2, 7, 14, 28, 56, 112, 364].find((k) => Math.floor((last - first) / k) + 1 <= maxTicks) ?? Math.ceil((last - first + 1) / maxTicks);
  const out: number[] = [];
  for (let d = first; d <= last; d += step) out.push(d * DAY_S);
  return out;
}

/** `dayRange` over the first and last x value (sorted, as uPlot needs), else over min…max. */
function dataDayRange(xs: ArrayLike<number> | undefined, min: number, max: number): [number, number] {
  const first = xs && xs.length > 0 ? xs[0] : undefined;
  const last = xs && xs.length > 0 ? xs[xs.length - 1] : undefined;
  return first !== undefined && last !== undefined ? dayRange(first, last) : dayRange(min, max);
}

/**
 * PlotFrame `configure` for per-day charts (x values are UTC midnights in seconds): points drawn
 * (`withPoints`), the x range from `dayRange` and ticks at UTC midnights from `daySplits`.
 */
export function withDayAxis(options: uPlot.Options): uPlot.Options {
  const o = withPoints(options);
  const [xAxis, ...rest] = o.axes ?? [];
  return {
    ...o,
    // From the data itself: for a single point uPlot hands the range function an already padded
    // "nice" span (a year or more), not the point.
    scales: { ...o.scales, x: { ...o.scales?.x, time: false, range: (u, min, max) => dataDayRange(u.data[0], min, max) } },
    axes: [{ ...xAxis, splits: (_u, _i, min, max) => daySplits(min, max) }, ...rest],
  };
}

/** `withDayAxis`, with the y scale fixed to 0…1 (shares such as the false-alarm rate). */
export function withDayAxisShare(options: uPlot.Options): uPlot.Options {
  const o = withDayAxis(options);
  return { ...o, scales: { ...o.scales, y: { ...o.scales?.y, range: [0, 1] } } };
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
