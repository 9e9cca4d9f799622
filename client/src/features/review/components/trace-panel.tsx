import { useCallback, useEffect, useMemo, useRef, type ReactNode } from 'react';
import type uPlot from 'uplot';
import { sortChannels } from '@shared/channel-order';
import type { TracesResponse } from '@shared/schemas/queue';
import { PlotFrame } from '@client/components/ui/plot-frame';
import { formatSi, niceTicks, siPrefixFor, siTickLabels, symmetricRange } from '@client/features/review/lib/amplitude';
import { amplitudeHalfRange, traceViewNames, type TraceView } from '@client/features/review/lib/display-settings';
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
  /** Shown under the stacked traces, e.g. a spectrogram (on the same time axis). */
  below?: ReactNode;
  /** The curve drawn on every channel (one key away: B). */
  view: TraceView;
  /** Amplitude gain, ×: the axis spans the reference peak ÷ gain (clipped beyond). */
  gain: number;
  /** Each trace scaled to its own peak (true) or every trace to the largest peak (true relative amplitude). */
  normalise: boolean;
  /** What the analyst's filter is, in words, when the view is 'filter' and it is still loading. */
  filterPending?: boolean;
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

/** One channel's curve for the chosen view, with the words saying which filter it came from. */
type Curve = { values: number[]; unit: string; from: string; refused: string | null };

function curveOf(c: ChannelTraces, view: TraceView, filtering: string): Curve {
  const f = (v: number) => String(v);
  switch (view) {
    case 'low':
      return { values: c.low, unit: c.units, from: `engine low band ${f(c.bands.low[0])}–${f(c.bands.low[1])} Hz, Butterworth, ${filtering}`, refused: null };
    case 'high':
      return { values: c.high, unit: c.units, from: `engine high band ${f(c.bands.high[0])}–${f(c.bands.high[1])} Hz, Butterworth, ${filtering}`, refused: null };
    case 'sta/lta':
      return { values: c.staLta, unit: '', from: `STA/LTA of the engine high band (${c.staLtaLevels.method}; on ${c.staLtaLevels.on}, off ${c.staLtaLevels.off})`, refused: null };
    case 'filter':
      if (c.display) return { values: c.display.values, unit: c.display.unit, from: `your filter: ${c.display.chain}`, refused: null };
      return { values: c.raw.map(() => 0), unit: c.units, from: 'your filter', refused: c.displayRefused ?? 'loading your filter…' };
    default:
      return { values: c.raw, unit: c.units, from: 'engine pre-processing: demeaned, detrended, tapered, no band-pass', refused: null };
  }
}

/** Plot height of each stacked channel, CSS px (three fit on a 900 px screen; the lowest gets the time axis' 26 px on top). */
export const stackedTraceHeightPx = 124;

/**
 * Every channel of the item stacked on one time axis (Z, then N/1, E/2: shared/channel-order.ts), one
 * curve per channel — the view chosen with B: the engine's pre-processed trace, its low or high band,
 * STA/LTA, or the analyst's own filter (units and band on the fly) — with one legend for all of them
 * above the stack, not one per panel. Each channel's title says which filter its peak came from.
 * Shared cursor and zoom (drag across any trace zooms every trace and the spectrogram); picks are
 * full-height lines in their phase's colour with the letter on top, on every channel; STA/LTA trigger
 * spans shaded grey; on Z traces the signal-spectrum segments are tinted and labelled. Amplitude:
 * per-trace normalisation or true relative amplitude (the largest peak of the channels shown), times
 * the gain; the ticks always read in the trace's own units (SI prefixes, lib/amplitude.ts).
 */
export function TracePanel({ traces, windowStartMs, picks, activePhase, onZoom, onPick, onCursor, syncKey, below, segments, view, gain, normalise }: TracePanelProps) {
  const ordered = useMemo(() => sortChannels(traces.channels, (c) => c.streamId), [traces.channels]);
  const curves = useMemo(() => ordered.map((c) => curveOf(c, view, traces.filtering)), [ordered, view, traces.filtering]);
  const scaled = useMemo(() => curves.map((k) => (k.unit === '' ? { values: k.values, unit: '', peak: k.values.reduce((m, v) => Math.max(m, Math.abs(v)), 0) } : displayScaled(k.values, k.unit))), [curves]);
  // True relative amplitude compares peaks in one unit: the SI base unit of each curve.
  const basePeaks = curves.map((k) => k.values.reduce((m, v) => Math.max(m, Math.abs(v)), 0));
  const allBase = Math.max(0, ...basePeaks);
  const lineStyle = view === 'low' ? 1 : view === 'high' ? 2 : view === 'sta/lta' ? 3 : view === 'filter' ? 5 : 0;
  return (
    <div className="flex flex-col gap-1" data-testid="trace-panel" data-view={view}>
      <div className="flex flex-wrap items-center gap-x-4 gap-y-1 text-xs text-ink-muted" aria-label="Legend of the traces" role="note">
        <span className="inline-flex items-center gap-1.5">
          <svg width="24" height="8" aria-hidden="true">
            <line x1="1" y1="4" x2="23" y2="4" stroke={`var(--sf-plot-${lineStyle + 1})`} strokeWidth="2" />
          </svg>
          <strong className="text-ink">{traceViewNames[view]}</strong>
        </span>
        <span>grey: STA/LTA trigger</span>
        <span>
          <span className="font-mono font-bold text-ink">P</span>/<span className="font-mono font-bold text-ink">S</span> line: pick
        </span>
        <span>Z: noise / signal parts of the spectrum</span>
        <span>{ordered[0] && ordered[0].bucket > 1 ? `min/max of ${ordered[0].bucket} samples per point` : 'every sample'}</span>
        <span>
          drag: zoom · click: <strong className="text-ink">{activePhase}</strong> · point + P/S: pick on that channel
        </span>
      </div>
      {ordered.map((c, i) => {
        const k = curves[i] as Curve;
        const d = scaled[i] as Scaled;
        const ownBase = basePeaks[i] ?? 0;
        // The axis half-range in the drawn (prefixed) unit.
        const factor = ownBase > 0 ? d.peak / ownBase : 1;
        const half = amplitudeHalfRange(ownBase, allBase, normalise, gain) * factor;
        return (
          <ChannelPlot
            key={c.streamId}
            c={c}
            curve={k}
            drawn={d}
            half={view === 'sta/lta' ? null : half}
            styleIndex={lineStyle}
            last={i === ordered.length - 1}
            windowStartMs={windowStartMs}
            picks={picks}
            onZoom={onZoom}
            onPick={onPick}
            onCursor={onCursor}
            syncKey={syncKey}
            segment={c.streamId.endsWith('Z') ? (segments?.[c.streamId] ?? null) : null}
          />
        );
      })}
      {below}
    </div>
  );
}

type ChannelPlotProps = Pick<TracePanelProps, 'windowStartMs' | 'picks' | 'onZoom' | 'onPick' | 'onCursor' | 'syncKey'> & {
  c: ChannelTraces;
  curve: Curve;
  drawn: Scaled;
  /** Amplitude half-range in the drawn unit; null: automatic (STA/LTA from 0). */
  half: number | null;
  styleIndex: number;
  /** The last channel carries the time axis' labels. */
  last: boolean;
  segment: SignalSegments | null;
};

function ChannelPlot({ c, curve, drawn, half, styleIndex, last, windowStartMs, picks, onZoom, onPick, onCursor, syncKey, segment }: ChannelPlotProps) {
  const picksRef = useRef(picks);
  picksRef.current = picks;
  // The handlers through a ref: a new handler (a pick key changes the click phase) must not rebuild the plot under the mouse.
  const handlers = useRef({ onZoom, onPick, onCursor });
  handlers.current = { onZoom, onPick, onCursor };
  const charts = useRef(new Set<uPlot>());
  // The signal/noise parts come with the item's detail, which a claim refetches: drawn from a ref
  // and redrawn, so a claim does not rebuild the plot under the mouse.
  const segmentRef = useRef(segment);
  segmentRef.current = segment;
  useEffect(() => {
    for (const u of charts.current) u.redraw(false, false);
  }, [picks, segment]);
  const x = useMemo(() => ({ label: 'Time from window start', unit: 's', values: c.times }), [c.times]);
  const configure = useCallback(
    (o: uPlot.Options): uPlot.Options => ({
      ...o,
      scales: { ...o.scales, y: { ...o.scales?.y, range: (_u: uPlot, min: number, max: number) => (half === null ? [0, Math.max(1, max * 1.05)] : symmetricRange(-half, half)) } },
      // Only the lowest trace labels the time axis; the others keep its grid.
      axes: [last ? (o.axes?.[0] ?? {}) : { ...o.axes?.[0], size: 4, values: () => [], label: '', labelSize: 0, labelGap: 0 }, amplitudeAxis(o.axes?.[1], half !== null)],
      cursor: { ...o.cursor, sync: { key: syncKey, setSeries: false } },
      hooks: {
        ...o.hooks,
        setSelect: [selectToZoom((from, to) => handlers.current.onZoom(from, to))],
        draw: [
          (u: uPlot) => {
            drawMarks(u, { picks: picksRef.current, windowStartMs, triggers: c.triggers, segments: segmentRef.current });
            u.root.dataset.xRange = `${u.scales.x?.min ?? ''} ${u.scales.x?.max ?? ''}`;
          },
        ],
        destroy: [(u: uPlot) => void charts.current.delete(u)],
        ready: [
          (u: uPlot) => {
            charts.current.add(u);
            let downX = 0;
            // The mouse itself, not uPlot's setCursor hook: with linked cursors every channel's
            // plot gets setCursor, so the last one to run (not the one under the mouse) would win.
            const timeAt = (e: MouseEvent) => u.posToVal(e.clientX - u.over.getBoundingClientRect().left, 'x');
            u.over.addEventListener('mousemove', (e) => handlers.current.onCursor({ streamId: c.streamId, timeS: timeAt(e) }));
            u.over.addEventListener('mouseleave', () => handlers.current.onCursor(null));
            u.over.addEventListener('mousedown', (e) => {
              downX = e.clientX;
            });
            u.over.addEventListener('click', (e) => {
              if (Math.abs(e.clientX - downX) > 3) return;
              handlers.current.onPick(c.streamId, timeAt(e));
            });
          },
        ],
      },
    }),
    [syncKey, c.streamId, c.triggers, windowStartMs, half, last],
  );
  // Stable props for the plot: a new axis formatter or series list on each render (the screen
  // re-renders as its side panels load) would make PlotFrame build the chart again.
  const y = useMemo(() => ({ label: drawn.unit || 'ratio', format: (v: number) => `${formatSi(v)}${drawn.unit ? ` ${drawn.unit}` : ''}` }), [drawn.unit]);
  const series = useMemo(() => [{ label: curve.from, values: drawn.values, styleIndex, dash: [] }], [curve.from, drawn.values, styleIndex]);
  const peak = drawn.unit === '' ? formatSi(drawn.peak) : `${formatSi(drawn.peak)} ${drawn.unit}`;
  const title = curve.refused ? `${c.streamId} · ${c.sampleRateHz} Hz · not shown` : `${c.streamId} · ${c.sampleRateHz} Hz · peak ${peak} from ${curve.from}`;
  return (
    <section aria-label={`Channel ${c.streamId}`} data-stream-id={c.streamId} data-filter={curve.from}>
      <PlotFrame
        title={title}
        description={`${curve.from} of ${c.streamId}${drawn.unit ? ` in ${drawn.unit}` : ''}`}
        x={x}
        y={y}
        series={series}
        height={last ? stackedTraceHeightPx + 26 : stackedTraceHeightPx}
        legend={false}
        configure={configure}
      />
      {curve.refused ? (
        <p className="px-1 text-sm text-ink" data-testid="filter-refused" role="status">
          <strong>Not shown:</strong> {curve.refused}
        </p>
      ) : null}
    </section>
  );
}
