import { useEffect, useLayoutEffect, useRef } from 'react';
import uPlot from 'uplot';
import 'uplot/dist/uPlot.min.css';
import { plotFontFamily, readPlotTheme } from '@client/components/ui/plot-frame';
import { epochToIso, stationOf } from '@client/features/events/lib/record-model';

/** One trace row: a channel's trace in absolute time, already scaled to its row (±0.45 of a row). */
export type RecordRow = {
  streamId: string;
  /** Left-hand label, e.g. "KV03 HHZ". */
  label: string;
  /** Second line of the label, e.g. "12.4 km". */
  detail: string;
  /** s since the epoch. */
  times: Float64Array;
  /** Row units (0 = the row's centre line). */
  values: Float64Array;
};

/** A pick drawn on the record section. */
export type DrawnPick = {
  id: number;
  streamId: string;
  phase: 'P' | 'S';
  /** s since the epoch. */
  time: number;
  uncertaintyS: number;
  kind: 'manual' | 'automatic';
  /** Residual against the current origin, s (null when the pick was not used). */
  residualS: number | null;
};

/** Predicted first arrivals at a station from the current origin, s since the epoch. */
export type StationPrediction = { P: number | null; S: number | null };

/** Where the mouse is: the channel under it and the time there. */
/** A UTC clock time "hh:mm:ss" (with tenths when `tenths`) for `s` seconds since the epoch. */
function utcClock(s: number, tenths: boolean): string {
  const iso = new Date(Math.round(s * 1000)).toISOString();
  return tenths ? iso.slice(11, 21) : iso.slice(11, 19);
}

export type RecordCursor = { streamId: string; time: number };

/** Props of <RecordSection>. */
export type RecordSectionProps = {
  rows: readonly RecordRow[];
  picks: readonly DrawnPick[];
  predicted: ReadonlyMap<string, StationPrediction>;
  selectedPickId: number | null;
  /** The shared time range shown, s since the epoch; null shows every trace whole. */
  zoom: readonly [number, number] | null;
  onZoom: (range: readonly [number, number] | null) => void;
  onCursor: (at: RecordCursor | null) => void;
  /** A click on a trace (not on a pick): place the armed phase there. */
  onClickTrace: (at: RecordCursor) => void;
  /** A click on (within 5 px of) a pick selects it. */
  onSelectPick: (id: number) => void;
};

/** Okabe–Ito colours by phase, the same tokens as the review screen (colour-blind safe; marks also differ by label and line style). */
const phaseToken = { P: '--sf-plot-4', S: '--sf-plot-6' } as const;

/** Row height, CSS px, for few and for many traces. */
function rowHeightPx(n: number): number {
  return n <= 8 ? 64 : n <= 16 ? 40 : 28;
}

/** Rows at least this tall (CSS px) have room for a two-line label (12 px font); lower rows put it on one line. */
const TWO_LINE_LABEL_MIN_PX = 40;

/** The time axis below the rows, CSS px: uPlot's default axis size (50) and axis-label size (30). */
const TIME_AXIS_PX = 80;

/** First index with t[i] ≥ x (binary search; `t` ascending). */
function lowerBound(t: Float64Array, x: number): number {
  let lo = 0;
  let hi = t.length;
  while (lo < hi) {
    const mid = (lo + hi) >> 1;
    if ((t[mid] as number) < x) lo = mid + 1;
    else hi = mid;
  }
  return lo;
}

type DrawState = Pick<RecordSectionProps, 'rows' | 'picks' | 'predicted' | 'selectedPickId'> & { hoverRow: number | null };

/**
 * Draws every row inside the plot area: the hovered row's band, the trace, the station's predicted
 * P and S (thin dashed, lower-case letter), automatic suggestions (dotted, "P?"), analysts' picks
 * (solid 2 px, letter in a box, ±1 σ shaded, residual beside it; thin on the station's other rows).
 * What was drawn goes to the root's data attributes for tests (the canvas cannot be read).
 */
function drawRows(u: uPlot, s: DrawState) {
  const ctx = u.ctx;
  const { top, height, left, width } = u.bbox;
  const ratio = window.devicePixelRatio || 1;
  const style = getComputedStyle(u.root);
  const token = (name: string, fallback: string) => style.getPropertyValue(name).trim() || fallback;
  const n = s.rows.length;
  const x0 = u.scales.x?.min ?? 0;
  const x1 = u.scales.x?.max ?? 1;
  const X = (t: number) => u.valToPos(t, 'x', true);
  const Y = (v: number) => u.valToPos(v, 'y', true);
  const ink = token('--sf-ink', '#222');
  const muted = token('--sf-ink-muted', '#777');
  ctx.save();
  ctx.beginPath();
  ctx.rect(left, top, width, height);
  ctx.clip();
  const drawnPicks: string[] = [];
  const drawnPredicted: string[] = [];
  s.rows.forEach((row, r) => {
    const base = n - 1 - r;
    const yTop = Y(base + 0.5);
    const yBottom = Y(base - 0.5);
    if (s.hoverRow === r) {
      ctx.fillStyle = token('--sf-accent-wash', 'rgba(0,0,0,0.06)');
      ctx.fillRect(left, yTop, width, yBottom - yTop);
    }
    // The trace, only the part in view.
    ctx.strokeStyle = ink;
    ctx.lineWidth = 1 * ratio;
    ctx.setLineDash([]);
    ctx.beginPath();
    const from = Math.max(0, lowerBound(row.times, x0) - 1);
    const to = Math.min(row.times.length, lowerBound(row.times, x1) + 1);
    for (let i = from; i < to; i++) {
      const px = X(row.times[i] as number);
      const py = Y(base + (row.values[i] as number));
      if (i === from) ctx.moveTo(px, py);
      else ctx.lineTo(px, py);
    }
    ctx.stroke();
    const station = stationOf(row.streamId);
    const pred = s.predicted.get(station);
    ctx.font = `italic 500 ${11 * ratio}px ${plotFontFamily}`;
    ctx.textBaseline = 'top';
    for (const phase of ['P', 'S'] as const) {
      const t = pred?.[phase];
      if (t === null || t === undefined) continue;
      const px = X(t);
      ctx.strokeStyle = token(phaseToken[phase], '#c0f');
      ctx.lineWidth = 1 * ratio;
      ctx.setLineDash([4 * ratio, 3 * ratio]);
      ctx.beginPath();
      ctx.moveTo(px, yTop + 2 * ratio);
      ctx.lineTo(px, yBottom - 2 * ratio);
      ctx.stroke();
      ctx.fillStyle = muted;
      ctx.fillText(phase.toLowerCase(), px + 2 * ratio, yBottom - 13 * ratio);
      drawnPredicted.push(`${row.streamId}:${phase}@${epochToIso(t)}`);
    }
    for (const p of s.picks) {
      if (stationOf(p.streamId) !== station) continue;
      const own = p.streamId === row.streamId;
      const px = X(p.time);
      const color = token(phaseToken[p.phase], '#c0f');
      if (p.kind === 'automatic') {
        if (!own) continue;
        ctx.strokeStyle = color;
        ctx.lineWidth = 1.5 * ratio;
        ctx.setLineDash([1.5 * ratio, 2.5 * ratio]);
        ctx.beginPath();
        ctx.moveTo(px, yTop);
        ctx.lineTo(px, yBottom);
        ctx.stroke();
        ctx.setLineDash([]);
        ctx.font = `600 ${11 * ratio}px ${plotFontFamily}`;
        ctx.fillStyle = color;
        ctx.fillText(`${p.phase}?`, px + 3 * ratio, yTop + 1 * ratio);
        drawnPicks.push(`${p.streamId}:${p.phase}:automatic@${epochToIso(p.time)}`);
        continue;
      }
      if (!own) {
        // The same arrival on the station's other components: a thin reminder line.
        ctx.strokeStyle = color;
        ctx.globalAlpha = 0.5;
        ctx.lineWidth = 1 * ratio;
        ctx.setLineDash([]);
        ctx.beginPath();
        ctx.moveTo(px, yTop);
        ctx.lineTo(px, yBottom);
        ctx.stroke();
        ctx.globalAlpha = 1;
        continue;
      }
      const sigmaPx = Math.abs(X(p.time + p.uncertaintyS) - px);
      ctx.globalAlpha = 0.18;
      ctx.fillStyle = color;
      ctx.fillRect(px - sigmaPx, yTop, 2 * sigmaPx, yBottom - yTop);
      ctx.globalAlpha = 1;
      const selected = p.id === s.selectedPickId;
      ctx.strokeStyle = color;
      ctx.lineWidth = (selected ? 3 : 2) * ratio;
      ctx.setLineDash([]);
      ctx.beginPath();
      ctx.moveTo(px, yTop);
      ctx.lineTo(px, yBottom);
      ctx.stroke();
      ctx.font = `700 ${12 * ratio}px ${plotFontFamily}`;
      const boxW = 14 * ratio;
      const boxH = 15 * ratio;
      ctx.fillStyle = color;
      ctx.fillRect(px - boxW / 2, yTop, boxW, boxH);
      if (selected) {
        ctx.strokeStyle = ink;
        ctx.lineWidth = 1.5 * ratio;
        ctx.strokeRect(px - boxW / 2 - 2 * ratio, yTop - 1 * ratio, boxW + 4 * ratio, boxH + 2 * ratio);
      }
      ctx.fillStyle = token('--sf-plot-bg', '#fff');
      ctx.textAlign = 'center';
      ctx.fillText(p.phase, px, yTop + 1.5 * ratio);
      ctx.textAlign = 'left';
      if (p.residualS !== null) {
        ctx.font = `500 ${11 * ratio}px ${plotFontFamily}`;
        ctx.fillStyle = ink;
        ctx.fillText(`${p.residualS >= 0 ? '+' : '−'}${Math.abs(p.residualS).toFixed(2)} s`, px + boxW / 2 + 3 * ratio, yTop + 1.5 * ratio);
      }
      drawnPicks.push(`${p.streamId}:${p.phase}:manual@${epochToIso(p.time)}`);
    }
  });
  ctx.restore();
  u.root.dataset.picks = drawnPicks.join(' ');
  u.root.dataset.predicted = drawnPredicted.join(' ');
  u.root.dataset.rows = s.rows.map((r) => r.streamId).join(' ');
  u.root.dataset.xRange = `${epochToIso(x0)} ${epochToIso(x1)}`;
}

/** The time span of every row, s since the epoch ([0, 1] when there is nothing). */
function fullRange(rows: readonly RecordRow[]): [number, number] {
  let a = Infinity;
  let b = -Infinity;
  for (const r of rows) {
    if (r.times.length === 0) continue;
    a = Math.min(a, r.times[0] as number);
    b = Math.max(b, r.times[r.times.length - 1] as number);
  }
  return Number.isFinite(a) && b > a ? [a, b] : [0, 1];
}

/**
 * The record section: every row on one plot with one time axis in UTC (absolute time, so the
 * moveout across stations reads directly), one cursor and one zoom (drag across to zoom, the parent
 * keeps the range). Rows are drawn by hand in a draw hook (uPlot gives the scales, axes, cursor and
 * selection), which keeps thirty traces on a single canvas.
 */
export function RecordSection({ rows, picks, predicted, selectedPickId, zoom, onZoom, onCursor, onClickTrace, onSelectPick }: RecordSectionProps) {
  const host = useRef<HTMLDivElement>(null);
  const chart = useRef<uPlot | null>(null);
  /** The rows and zoom the plot was last built with (already drawn). */
  const builtFor = useRef<{ rows: readonly RecordRow[]; zoom: readonly [number, number] | null } | null>(null);
  const state = useRef<DrawState>({ rows, picks, predicted, selectedPickId, hoverRow: null });
  state.current = { ...state.current, rows, picks, predicted, selectedPickId };
  const zoomRef = useRef(zoom);
  zoomRef.current = zoom;
  const handlers = useRef({ onZoom, onCursor, onClickTrace, onSelectPick });
  handlers.current = { onZoom, onCursor, onClickTrace, onSelectPick };

  const n = rows.length;
  const shape = rows.map((r) => r.streamId).sort().join(' ');
  const heightPx = Math.max(240, n * rowHeightPx(n) + TIME_AXIS_PX);
  const labelBreak = rowHeightPx(n) >= TWO_LINE_LABEL_MIN_PX ? '\n' : ' ';

  // A new width resizes the plot in place (a rebuild would draw every trace twice on the first screen).
  useEffect(() => {
    const el = host.current;
    if (!el) return;
    const ro = new ResizeObserver((entries) => {
      const w = Math.floor(entries[0]?.contentRect.width ?? 0);
      const u = chart.current;
      if (u && w > 0 && w !== u.width) u.setSize({ width: w, height: u.height });
    });
    ro.observe(el);
    return () => ro.disconnect();
  }, []);

  // Built before the browser paints (a layout effect), so the traces are in the screen's first picture.
  useLayoutEffect(() => {
    const el = host.current;
    if (!el || n === 0) return;
    const width = el.clientWidth || 900;
    const theme = readPlotTheme(el);
    const [a, b] = fullRange(state.current.rows);
    const axisFont = `12px ${plotFontFamily}`;
    const opts: uPlot.Options = {
      width,
      height: heightPx,
      legend: { show: false },
      tzDate: (ts: number) => uPlot.tzDate(new Date(ts * 1e3), 'Etc/UTC'),
      scales: {
        x: { time: true, range: () => (zoomRef.current ? [zoomRef.current[0], zoomRef.current[1]] : fullRange(state.current.rows)) },
        y: { auto: false, range: [-0.5, n - 0.5] },
      },
      axes: [
        {
          stroke: theme.axis,
          grid: { stroke: theme.grid, width: 1 },
          ticks: { stroke: theme.grid },
          font: axisFont,
          label: 'UTC (hh:mm:ss)',
          labelFont: axisFont,
          // At least one label's width apart, so "hh:mm:ss" labels never overlap.
          space: 64,
          // 24-hour UTC clock times, tenths when the ticks are under a second apart (the date is in the title).
          values: (_u: uPlot, splits: number[], _axis: number, _space: number, incr: number) => splits.map((v) => utcClock(v, incr < 1)),
        },
        {
          stroke: theme.ink,
          grid: { stroke: theme.grid, width: 1 },
          font: axisFont,
          size: 132,
          gap: 6,
          splits: () => Array.from({ length: n }, (_, r) => n - 1 - r),
          // From the latest rows: a relocation changes the distances without rebuilding the plot.
          values: (_u: uPlot, splits: number[]) => splits.map((v) => {
            const row = state.current.rows[n - 1 - v];
            return row ? `${row.label}${labelBreak}${row.detail}` : '';
          }),
        },
      ],
      series: [{}, { stroke: 'transparent', points: { show: false } }],
      cursor: { drag: { x: true, y: false, setScale: false }, points: { show: false }, y: false },
      hooks: {
        draw: [(u: uPlot) => drawRows(u, state.current)],
        setSelect: [
          (u: uPlot) => {
            if (u.select.width > 4) {
              const from = u.posToVal(u.select.left, 'x');
              const to = u.posToVal(u.select.left + u.select.width, 'x');
              u.setSelect({ left: 0, top: 0, width: 0, height: 0 }, false);
              handlers.current.onZoom([from, to]);
            }
          },
        ],
        ready: [
          (u: uPlot) => {
            const at = (e: MouseEvent): { row: number; time: number; px: number; py: number } => {
              const box = u.over.getBoundingClientRect();
              const px = e.clientX - box.left;
              const py = e.clientY - box.top;
              const v = u.posToVal(py, 'y');
              const row = Math.min(n - 1, Math.max(0, Math.round(n - 1 - v)));
              return { row, time: u.posToVal(px, 'x'), px, py };
            };
            let downX = 0;
            u.over.addEventListener('mousemove', (e) => {
              const p = at(e);
              const row = state.current.rows[p.row];
              if (!row) return;
              if (state.current.hoverRow !== p.row) {
                state.current.hoverRow = p.row;
                u.redraw(false, false);
              }
              handlers.current.onCursor({ streamId: row.streamId, time: p.time });
            });
            u.over.addEventListener('mouseleave', () => {
              state.current.hoverRow = null;
              u.redraw(false, false);
              handlers.current.onCursor(null);
            });
            u.over.addEventListener('mousedown', (e) => {
              downX = e.clientX;
            });
            u.over.addEventListener('click', (e) => {
              if (Math.abs(e.clientX - downX) > 3) return;
              const p = at(e);
              const row = state.current.rows[p.row];
              if (!row) return;
              const near = state.current.picks.find((k) => k.kind === 'manual' && k.streamId === row.streamId && Math.abs(u.valToPos(k.time, 'x') - p.px) <= 5);
              if (near) handlers.current.onSelectPick(near.id);
              else handlers.current.onClickTrace({ streamId: row.streamId, time: p.time });
            });
            u.over.addEventListener('dblclick', () => handlers.current.onZoom(null));
          },
        ],
      },
    };
    const u = new uPlot(opts, [[a, b], [null, null]], el);
    chart.current = u;
    builtFor.current = { rows: state.current.rows, zoom: zoomRef.current };
    return () => {
      u.destroy();
      chart.current = null;
    };
    // Rebuilt only when the set of rows (or the size) changes: new values, labels or order of the
    // same streams after a relocation are a redraw (below), not a new plot.
  }, [shape, heightPx, n, labelBreak]);

  // Rows' data and labels, picks, predictions and selection change without rebuilding the plot
  // (nothing to do for what the plot was just built with).
  useEffect(() => {
    if (builtFor.current?.rows !== rows) chart.current?.redraw(false, true);
  }, [rows]);
  useEffect(() => {
    chart.current?.redraw(false, false);
  }, [picks, predicted, selectedPickId]);
  useEffect(() => {
    const u = chart.current;
    if (!u || (builtFor.current?.rows === rows && builtFor.current.zoom === zoom)) return;
    const [a, b] = zoom ?? fullRange(rows);
    u.setScale('x', { min: a, max: b });
  }, [zoom, rows]);

  return <div ref={host} data-testid="record-section" style={{ minHeight: heightPx }} className="w-full" />;
}
