import { Fragment, useCallback, useEffect, useMemo, useRef, type ReactNode } from 'react';
import type uPlot from 'uplot';
import { sortChannels } from '@shared/channel-order';
import type { TracesResponse } from '@shared/schemas/queue';
import { PlotFrame } from '@client/components/ui/plot-frame';
import { formatSi, niceTicks, siPrefixFor, siTickLabels, symmetricRange } from '@client/features/review/lib/amplitude';
import { selectToZoom } from '@client/features/review/lib/select-zoom';

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
  /**
   * The trace under the mouse and the time there, s (null once the mouse leaves every trace), for
   * keyboard picks and zoom. Only the plot the mouse is really over reports: the linked cursor
   * lines drawn on the other channels' plots do not.
   */
  onCursor: (at: TraceCursor | null) => void;
  syncKey: string;
  /** Shown right after the lead (vertical) channel, e.g. its spectrogram. */
  afterLead?: ReactNode;
  /** Per stream id: the engine's signal and noise segments, shaded on vertical (Z) traces. */
  segments?: Readonly<Record<string, SignalSegments | null>>;
};

/** Where the mouse is over the traces: the channel's stream id and the time, s from the window start. */
export type TraceCursor = { streamId: string; timeS: number };

/** Width of every trace plot's amplitude axis, CSS px; plots drawn under the traces use it too so their time axes line up. */
export const traceYAxisSizePx = 58;

/** Seconds from the window start of an ISO pick time. */
export function pickSeconds(p: PickMark, windowStartMs: number): number {
  const [, frac = ''] = p.time.replace('Z', '').split('.');
  const whole = Date.parse(`${p.time.slice(0, 19)}Z`);
  return (whole - windowStartMs) / 1000 + Number(`0.${frac || '0'}`);
}

/** The signal and pre-trigger noise parts the engine's signal spectrum used, s from the window start. */
export type SignalSegments = { fromS: number; toS: number; noiseFromS: number; noiseToS: number };

/** Token colours of the pick markers: Okabe–Ito reddish purple (P) and vermillion (S), both colour-blind safe. */
const pickTokens = { P: '--sf-plot-4', S: '--sf-plot-6' } as const;

type MarkOptions = {
  picks: readonly PickMark[];
  windowStartMs: number;
  triggers: ChannelTraces['triggers'] | null;
  segments: SignalSegments | null;
};

/**
 * Draws, inside the plot area: STA/LTA trigger spans (light grey), the signal-spectrum segments
 * (very light tint with a labelled bar along the bottom: "noise", "signal"), and every pick as a
 * full-height 2 px line in its phase's colour with the phase letter in a box at the top. Every
 * channel's panels get every pick (one arrival, one time on all components). The drawn picks are
 * listed in the root's `data-picks` ("P@20.123 S@25.400", s from the window start) for tests and
 * assistive checks, as the canvas itself cannot be read.
 */
function drawMarks(u: uPlot, o: MarkOptions) {
  const ctx = u.ctx;
  const { top, height, left, width } = u.bbox;
  const style = getComputedStyle(u.root);
  const token = (name: string, fallback: string) => style.getPropertyValue(name).trim() || fallback;
  const ratio = window.devicePixelRatio || 1;
  const xOf = (t: number) => u.valToPos(t, 'x', true);
  ctx.save();
  ctx.beginPath();
  ctx.rect(left, top, width, height);
  ctx.clip();
  if (o.triggers) {
    ctx.fillStyle = 'rgba(127,127,127,0.16)';
    for (const t of o.triggers) {
      const x0 = xOf(t.on);
      const x1 = xOf(t.off ?? (u.scales.x?.max ?? t.on));
      ctx.fillRect(x0, top, Math.max(1, x1 - x0), height);
    }
  }
  ctx.font = `500 ${11 * ratio}px 'IBM Plex Mono', monospace`;
  ctx.textBaseline = 'bottom';
  if (o.segments) {
    const parts = [
      { from: o.segments.noiseFromS, to: o.segments.noiseToS, name: 'noise', color: token('--sf-plot-5', '#888') },
      { from: o.segments.fromS, to: o.segments.toS, name: 'signal', color: token('--sf-plot-3', '#888') },
    ];
    for (const part of parts) {
      const x0 = xOf(part.from);
      const x1 = xOf(part.to);
      ctx.globalAlpha = 0.1;
      ctx.fillStyle = part.color;
      ctx.fillRect(x0, top, Math.max(1, x1 - x0), height);
      ctx.globalAlpha = 1;
      ctx.fillRect(x0, top + height - 4 * ratio, Math.max(1, x1 - x0), 4 * ratio);
      ctx.fillStyle = token('--sf-ink', '#000');
      ctx.fillText(part.name, x0 + 3 * ratio, top + height - 5 * ratio);
    }
  }
  const drawn: string[] = [];
  ctx.font = `700 ${13 * ratio}px 'IBM Plex Mono', monospace`;
  ctx.textBaseline = 'top';
  for (const p of o.picks) {
    const t = pickSeconds(p, o.windowStartMs);
    const x = xOf(t);
    const color = token(pickTokens[p.phase], '#c0f');
    ctx.strokeStyle = color;
    ctx.lineWidth = 2 * ratio;
    ctx.setLineDash([]);
    ctx.beginPath();
    ctx.moveTo(x, top);
    ctx.lineTo(x, top + height);
    ctx.stroke();
    const boxW = 16 * ratio;
    const boxH = 17 * ratio;
    ctx.fillStyle = color;
    ctx.fillRect(x - boxW / 2, top, boxW, boxH);
    ctx.fillStyle = token('--sf-plot-bg', '#fff');
    ctx.textAlign = 'center';
    ctx.fillText(p.phase, x, top + 2 * ratio);
    ctx.textAlign = 'left';
    drawn.push(`${p.phase}@${t.toFixed(3)}`);
  }
  ctx.restore();
  u.root.dataset.picks = drawn.join(' ');
}

/** A trace as drawn: values in `unit`, and its largest |value| in that unit. */
type Scaled = { values: number[]; unit: string; peak: number };

/**
 * Physical traces (m/s and the like) below 1 are drawn in the SI-prefixed unit of their peak
 * (µm/s, nm/s), so ticks read "−2 0 2" with the prefix in the axis label; counts stay as they are
 * and get prefixed ticks (1.2k).
 */
function displayScaled(values: number[], unit: string): Scaled {
  const peak = values.reduce((m, v) => Math.max(m, Math.abs(v)), 0);
  const p = siPrefixFor(peak);
  if (unit === 'counts' || p.exp >= 0) return { values, unit, peak };
  const k = 10 ** -p.exp;
  return { values: values.map((v) => v * k), unit: `${p.symbol}${unit}`, peak: peak * k };
}

/**
 * Amplitude ticks: SI-prefixed, one prefix per axis (see lib/amplitude.ts), written to the root's
 * `data-y-ticks` too (the canvas cannot be read by tests).
 */
function amplitudeAxis(axis: uPlot.Axis | undefined, amplitude: boolean): uPlot.Axis {
  return {
    ...axis,
    size: traceYAxisSizePx,
    // On traces, 1-2-5 splits over the symmetric range (which ends on a tick): uPlot's own search
    // on a ~70 px plot picked a step just larger than the half-range and left a lone "0".
    // Panels under 120 px get only −h, 0, h so the labels never overlap.
    ...(amplitude ? { splits: (u: uPlot, _axis: number, min: number, max: number) => (u.height >= 120 ? niceTicks(min, max, 4) : [min, 0, max]) } : {}),
    values: (u: uPlot, splits: number[]) => {
      const labels = siTickLabels(splits);
      u.root.dataset.yTicks = labels.join(' ');
      return labels;
    },
  };
}

/**
 * All channels of the item, each as its pre-processed trace and both causal band-pass traces, plus
 * the STA/LTA curve of every channel with its trigger-on/off levels. Every plot shares one cursor
 * (uPlot sync) and one zoom: drag across any plot to zoom all of them (the server then sends full
 * resolution for short spans). Every trace is a solid line (each band has its own titled panel);
 * the y-axes carry SI-prefixed amplitude ticks in the channel's units (counts, or m/s with a
 * sensitivity). Picks are full-height lines in their phase's colour with the letter on top, on
 * every channel; STA/LTA trigger spans are shaded grey; on Z traces the signal-spectrum segments
 * are tinted and labelled.
 */
export function TracePanel({ traces, windowStartMs, picks, activePhase, onZoom, onPick, onCursor, syncKey, afterLead, segments }: TracePanelProps) {
  // Vertical first, then the horizontals N/1 and E/2 (the usual Z, N, E reading order, common practice).
  // The same channel order as everywhere else (shared/channel-order.ts: by location, then Z, N/1, E/2).
  const ordered = useMemo(() => sortChannels(traces.channels, (c) => c.streamId), [traces.channels]);
  return (
    <div className="flex flex-col gap-2" data-testid="trace-panel">
      <p className="text-sm text-ink-muted">
        Drag across a trace to zoom all of them; click to place a <strong className="text-ink">{activePhase}</strong> pick, or point and press <kbd>P</kbd>/<kbd>S</kbd>{' '}
        (the pick goes on the channel under the mouse). Band traces: Butterworth band-pass, {traces.filtering}. {ordered[0] && ordered[0].bucket > 1 ? `Shown as min/max of ${ordered[0].bucket} samples per point.` : 'Every sample shown.'}
      </p>
      {ordered.map((c, i) => (
        <Fragment key={c.streamId}>
          <ChannelPlots c={c} windowStartMs={windowStartMs} picks={picks} onZoom={onZoom} onPick={onPick} onCursor={onCursor} syncKey={syncKey} segment={c.streamId.endsWith('Z') ? (segments?.[c.streamId] ?? null) : null} />
          {i === 0 ? afterLead : null}
        </Fragment>
      ))}
    </div>
  );
}

function ChannelPlots({ c, windowStartMs, picks, onZoom, onPick, onCursor, syncKey, segment }: Omit<TracePanelProps, 'traces' | 'activePhase' | 'afterLead' | 'segments'> & { c: ChannelTraces; segment: SignalSegments | null }) {
  const picksRef = useRef(picks);
  picksRef.current = picks;
  // Picks change without rebuilding the plots: redraw the existing charts' marks.
  const charts = useRef(new Set<uPlot>());
  useEffect(() => {
    for (const u of charts.current) u.redraw(false, false);
  }, [picks]);
  const x = useMemo(() => ({ label: 'Time from window start', unit: 's', values: c.times }), [c.times]);
  const configure = useCallback(
    (withTriggers: boolean, withSegments: boolean, amplitude: boolean) => (o: uPlot.Options): uPlot.Options => ({
      ...o,
      // Traces: a range symmetric about 0 that ends on a tick (lib/amplitude.ts symmetricRange).
      scales: amplitude ? { ...o.scales, y: { ...o.scales?.y, range: (_u: uPlot, min: number, max: number) => symmetricRange(min, max) } } : o.scales,
      axes: [o.axes?.[0] ?? {}, amplitudeAxis(o.axes?.[1], amplitude)],
      cursor: { ...o.cursor, sync: { key: syncKey, setSeries: false } },
      hooks: {
        ...o.hooks,
        setSelect: [
          selectToZoom(onZoom),
        ],
        draw: [
          (u: uPlot) => {
            drawMarks(u, { picks: picksRef.current, windowStartMs, triggers: withTriggers ? c.triggers : null, segments: withSegments ? segment : null });
            // The time range drawn, s (tests compare it with the spectrogram's; the canvas cannot be read).
            u.root.dataset.xRange = `${u.scales.x?.min ?? ''} ${u.scales.x?.max ?? ''}`;
          },
        ],
        destroy: [(u: uPlot) => void charts.current.delete(u)],
        ready: [
          (u: uPlot) => {
            charts.current.add(u);
            let downX = 0;
            // The mouse itself, not uPlot's setCursor hook: with linked cursors every channel's
            // plots get setCursor, so the last one to run (not the one under the mouse) would win.
            const timeAt = (e: MouseEvent) => u.posToVal(e.clientX - u.over.getBoundingClientRect().left, 'x');
            u.over.addEventListener('mousemove', (e) => onCursor({ streamId: c.streamId, timeS: timeAt(e) }));
            u.over.addEventListener('mouseleave', () => onCursor(null));
            u.over.addEventListener('mousedown', (e) => {
              downX = e.clientX;
            });
            u.over.addEventListener('click', (e) => {
              if (Math.abs(e.clientX - downX) > 3) return;
              onPick(c.streamId, timeAt(e));
            });
          },
        ],
      },
    }),
    [syncKey, onZoom, onCursor, onPick, c.streamId, c.triggers, windowStartMs, segment],
  );
  const plain = useMemo(() => configure(false, false, true), [configure]);
  const rawConfig = useMemo(() => configure(true, true, true), [configure]);
  const withTriggers = useMemo(() => configure(true, false, false), [configure]);
  const on = useMemo(() => c.times.map(() => c.staLtaLevels.on), [c.times, c.staLtaLevels.on]);
  const off = useMemo(() => c.times.map(() => c.staLtaLevels.off), [c.times, c.staLtaLevels.off]);
  const f = (v: number) => String(v);
  const raw = useMemo(() => displayScaled(c.raw, c.units), [c.raw, c.units]);
  const low = useMemo(() => displayScaled(c.low, c.units), [c.low, c.units]);
  const high = useMemo(() => displayScaled(c.high, c.units), [c.high, c.units]);
  const peak = (d: Scaled) => `${formatSi(d.peak)} ${d.unit}`;
  return (
    <section aria-label={`Channel ${c.streamId}`} className="rounded-sm border border-line bg-surface p-2">
      <h3 className="pb-1 font-mono text-sm font-medium">
        {c.streamId} <span className="font-sans font-normal text-ink-muted">· {c.sampleRateHz} Hz · {c.units}</span>
      </h3>
      <PlotFrame
        title={`${c.streamId} pre-processed trace · peak |x| ${peak(raw)}`}
        description={`Demeaned, detrended and tapered trace of ${c.streamId} in ${c.units}`}
        x={x}
        y={{ label: raw.unit, format: (v) => `${formatSi(v)} ${raw.unit}` }}
        series={[{ label: 'trace (demeaned, detrended)', values: raw.values, styleIndex: 0, dash: [] }]}
        height={130}
        configure={rawConfig}
      />
      <PlotFrame
        title={`${c.streamId} low band ${f(c.bands.low[0])}–${f(c.bands.low[1])} Hz · peak |x| ${peak(low)}`}
        description={`Low band ${c.bands.low[0]} to ${c.bands.low[1]} Hz of ${c.streamId}`}
        x={x}
        y={{ label: low.unit, format: (v) => `${formatSi(v)} ${low.unit}` }}
        series={[{ label: `low band ${f(c.bands.low[0])}–${f(c.bands.low[1])} Hz`, values: low.values, styleIndex: 1, dash: [] }]}
        height={100}
        configure={plain}
      />
      <PlotFrame
        title={`${c.streamId} high band ${f(c.bands.high[0])}–${f(c.bands.high[1])} Hz · peak |x| ${peak(high)}`}
        description={`High band ${c.bands.high[0]} to ${c.bands.high[1]} Hz of ${c.streamId}`}
        x={x}
        y={{ label: high.unit, format: (v) => `${formatSi(v)} ${high.unit}` }}
        series={[{ label: `high band ${f(c.bands.high[0])}–${f(c.bands.high[1])} Hz`, values: high.values, styleIndex: 2, dash: [] }]}
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
