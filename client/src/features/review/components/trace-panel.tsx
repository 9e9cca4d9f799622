import { Fragment, useCallback, useMemo, useRef, type ReactNode } from 'react';
import type uPlot from 'uplot';
import type { TracesResponse } from '../../../../../shared/schemas/queue';
import { PlotFrame } from '../../../components/ui/plot-frame';

type ChannelTraces = TracesResponse['channels'][number];

/** What a drawn pick needs. */
export type PickMark = { phase: 'P' | 'S'; time: string; streamId: string };

/** Props of <TracePanel>. */
export type TracePanelProps = {
  traces: TracesResponse;
  /** Window start, ms since epoch (pick times are window start + s). */
  windowStartMs: number;
  picks: readonly PickMark[];
  /** The phase a click places. */
  activePhase: 'P' | 'S';
  /** A drag over any trace zooms every trace to [from, to] s. */
  onZoom: (from: number, to: number) => void;
  /** A click on a trace places a pick at `timeS` on `streamId`. */
  onPick: (streamId: string, timeS: number) => void;
  /** The cursor's time, s (null when off the plots), for keyboard picks and zoom. */
  onCursor: (timeS: number | null) => void;
  syncKey: string;
  /** Shown right after the lead (vertical) channel, e.g. its spectrogram. */
  afterLead?: ReactNode;
};

/** Seconds from the window start of an ISO pick time. */
export function pickSeconds(p: PickMark, windowStartMs: number): number {
  const [, frac = ''] = p.time.replace('Z', '').split('.');
  const whole = Date.parse(`${p.time.slice(0, 19)}Z`);
  return (whole - windowStartMs) / 1000 + Number(`0.${frac || '0'}`);
}

function drawMarks(u: uPlot, picks: readonly PickMark[], streamId: string, windowStartMs: number, triggers: ChannelTraces['triggers'] | null, color: string) {
  const ctx = u.ctx;
  const { top, height, left, width } = u.bbox;
  ctx.save();
  ctx.beginPath();
  ctx.rect(left, top, width, height);
  ctx.clip();
  if (triggers) {
    ctx.fillStyle = 'rgba(127,127,127,0.16)';
    for (const t of triggers) {
      const x0 = u.valToPos(t.on, 'x', true);
      const x1 = u.valToPos(t.off ?? (u.scales.x?.max ?? t.on), 'x', true);
      ctx.fillRect(x0, top, Math.max(1, x1 - x0), height);
    }
  }
  const ratio = window.devicePixelRatio || 1;
  ctx.font = `${12 * ratio}px 'IBM Plex Mono', monospace`;
  for (const p of picks) {
    if (p.streamId !== streamId) continue;
    const x = u.valToPos(pickSeconds(p, windowStartMs), 'x', true);
    ctx.strokeStyle = color;
    ctx.fillStyle = color;
    ctx.lineWidth = 2 * ratio;
    ctx.setLineDash(p.phase === 'P' ? [] : [6 * ratio, 4 * ratio]);
    ctx.beginPath();
    ctx.moveTo(x, top);
    ctx.lineTo(x, top + height);
    ctx.stroke();
    ctx.fillText(p.phase, x + 4 * ratio, top + 14 * ratio);
  }
  ctx.restore();
}

/**
 * All channels of the item, each as its pre-processed trace and both causal band-pass traces, plus
 * the STA/LTA curve of every channel with its trigger-on/off levels. Every plot shares one cursor
 * (uPlot sync) and one zoom: drag across any plot to zoom all of them (the server then sends full
 * resolution for short spans). Picks are drawn as lines (P solid, S dashed, with their letter);
 * STA/LTA trigger spans are shaded.
 */
export function TracePanel({ traces, windowStartMs, picks, activePhase, onZoom, onPick, onCursor, syncKey, afterLead }: TracePanelProps) {
  // Vertical first, then the horizontals N/1 and E/2 (the usual Z, N, E reading order, common practice).
  const rank = (id: string) => ({ Z: 0, N: 1, '1': 1, E: 2, '2': 2 })[id.slice(-1)] ?? 3;
  const ordered = useMemo(() => [...traces.channels].sort((a, b) => rank(a.streamId) - rank(b.streamId) || a.streamId.localeCompare(b.streamId)), [traces.channels]);
  return (
    <div className="flex flex-col gap-2" data-testid="trace-panel">
      <p className="text-sm text-ink-muted">
        Drag across a trace to zoom all of them; click to place a <strong className="text-ink">{activePhase}</strong> pick (<kbd>P</kbd>/<kbd>S</kbd> choose the
        phase). Band traces: Butterworth band-pass, {traces.filtering}. {ordered[0] && ordered[0].bucket > 1 ? `Shown as min/max of ${ordered[0].bucket} samples per point.` : 'Every sample shown.'}
      </p>
      {ordered.map((c, i) => (
        <Fragment key={c.streamId}>
          <ChannelPlots c={c} windowStartMs={windowStartMs} picks={picks} onZoom={onZoom} onPick={onPick} onCursor={onCursor} syncKey={syncKey} />
          {i === 0 ? afterLead : null}
        </Fragment>
      ))}
    </div>
  );
}

function ChannelPlots({ c, windowStartMs, picks, onZoom, onPick, onCursor, syncKey }: Omit<TracePanelProps, 'traces' | 'activePhase' | 'afterLead'> & { c: ChannelTraces }) {
  const picksRef = useRef(picks);
  picksRef.current = picks;
  const x = useMemo(() => ({ label: 'Time from window start', unit: 's', values: c.times }), [c.times]);
  const configure = useCallback(
    (withTriggers: boolean) => (o: uPlot.Options): uPlot.Options => ({
      ...o,
      cursor: { ...o.cursor, sync: { key: syncKey, setSeries: false } },
      hooks: {
        ...o.hooks,
        setSelect: [
          (u: uPlot) => {
            if (u.select.width > 4) {
              const from = u.posToVal(u.select.left, 'x');
              const to = u.posToVal(u.select.left + u.select.width, 'x');
              u.setSelect({ left: 0, top: 0, width: 0, height: 0 }, false);
              onZoom(Math.max(0, from), to);
            }
          },
        ],
        setCursor: [
          ...(o.hooks?.setCursor ?? []),
          (u: uPlot) => {
            const left = u.cursor.left;
            onCursor(left === undefined || left < 0 ? null : u.posToVal(left, 'x'));
          },
        ],
        draw: [(u: uPlot) => drawMarks(u, picksRef.current, c.streamId, windowStartMs, withTriggers ? c.triggers : null, getComputedStyle(u.root).getPropertyValue('--sf-accent').trim() || '#888')],
        ready: [
          (u: uPlot) => {
            let downX = 0;
            u.over.addEventListener('mousedown', (e) => {
              downX = e.clientX;
            });
            u.over.addEventListener('click', (e) => {
              if (Math.abs(e.clientX - downX) > 3) return;
              const rect = u.over.getBoundingClientRect();
              onPick(c.streamId, u.posToVal(e.clientX - rect.left, 'x'));
            });
          },
        ],
      },
    }),
    [syncKey, onZoom, onCursor, onPick, c.streamId, c.triggers, windowStartMs],
  );
  const plain = useMemo(() => configure(false), [configure]);
  const withTriggers = useMemo(() => configure(true), [configure]);
  const on = useMemo(() => c.times.map(() => c.staLtaLevels.on), [c.times, c.staLtaLevels.on]);
  const off = useMemo(() => c.times.map(() => c.staLtaLevels.off), [c.times, c.staLtaLevels.off]);
  const f = (v: number) => String(v);
  const peak = (y: number[]) => y.reduce((m, v) => Math.max(m, Math.abs(v)), 0).toExponential(2).replace('-', '\u2212');
  return (
    <section aria-label={`Channel ${c.streamId}`} className="rounded-sm border border-line bg-surface p-2">
      <h3 className="pb-1 font-mono text-sm font-medium">
        {c.streamId} <span className="font-sans font-normal text-ink-muted">· {c.sampleRateHz} Hz · {c.units}</span>
      </h3>
      <PlotFrame
        title={`${c.streamId} pre-processed trace · peak |x| ${peak(c.raw)} ${c.units}`}
        description={`Demeaned, detrended and tapered trace of ${c.streamId} in ${c.units}`}
        x={x}
        y={{ label: 'raw', unit: c.units }}
        series={[{ label: 'trace (demeaned, detrended)', values: c.raw, styleIndex: 0 }]}
        height={130}
        configure={withTriggers}
      />
      <PlotFrame
        title={`${c.streamId} low band ${f(c.bands.low[0])}–${f(c.bands.low[1])} Hz · peak |x| ${peak(c.low)} ${c.units}`}
        description={`Low band ${c.bands.low[0]} to ${c.bands.low[1]} Hz of ${c.streamId}`}
        x={x}
        y={{ label: 'low', unit: c.units }}
        series={[{ label: `low band ${f(c.bands.low[0])}–${f(c.bands.low[1])} Hz`, values: c.low, styleIndex: 1 }]}
        height={100}
        configure={plain}
      />
      <PlotFrame
        title={`${c.streamId} high band ${f(c.bands.high[0])}–${f(c.bands.high[1])} Hz · peak |x| ${peak(c.high)} ${c.units}`}
        description={`High band ${c.bands.high[0]} to ${c.bands.high[1]} Hz of ${c.streamId}`}
        x={x}
        y={{ label: 'high', unit: c.units }}
        series={[{ label: `high band ${f(c.bands.high[0])}–${f(c.bands.high[1])} Hz`, values: c.high, styleIndex: 2 }]}
        height={100}
        configure={plain}
      />
      <PlotFrame
        title={`${c.streamId} STA/LTA (${c.staLtaLevels.method}; 0 until the LTA window is full; shaded: triggered)`}
        description={`STA/LTA ratio of the high band with trigger-on level ${c.staLtaLevels.on} and off level ${c.staLtaLevels.off}; trigger spans shaded`}
        x={x}
        y={{ label: 'STA/LTA' }}
        series={[
          { label: 'STA/LTA ratio', values: c.staLta, styleIndex: 3 },
          { label: `on level ${c.staLtaLevels.on}`, values: on, styleIndex: 4 },
          { label: `off level ${c.staLtaLevels.off}`, values: off, styleIndex: 5 },
        ]}
        height={110}
        configure={withTriggers}
      />
    </section>
  );
}
