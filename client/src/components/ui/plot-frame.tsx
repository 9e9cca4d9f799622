import { useCallback, useEffect, useId, useLayoutEffect, useMemo, useRef, useState, type RefObject } from 'react';
import uPlot from 'uplot';
import UplotReact from 'uplot-react';
import 'uplot/dist/uPlot.min.css';
import { cx } from '@client/lib/cx';

/** The axes font of every plot (shipped with the app, see early.ts). */
export const plotFontFamily = "'IBM Plex Mono', ui-monospace, monospace";

/**
 * Dash patterns by series index (CSS px: dash, gap, ...). Series 1 is solid; the others differ by
 * pattern so the legend and the lines can be matched without colour.
 */
export const plotDashes: readonly (readonly number[])[] = [[], [7, 4], [2, 3], [10, 3, 2, 3], [14, 5], [6, 2, 2, 2, 2, 2]];

/** One y series. */
export type PlotSeries = {
  label: string;
  /** Same length as the x values; null leaves a gap. */
  values: Float64Array | Array<number | null>;
  /** Index into the token colours (--sf-plot-1..6) and plotDashes; defaults to the series' position. */
  styleIndex?: number;
  /** Dash pattern (CSS px) in place of the style index's; [] draws a solid line. */
  dash?: readonly number[];
};

/** One axis description. */
export type PlotAxis = {
  label: string;
  /** Unit shown after the label, e.g. "s", "Hz", "counts". */
  unit?: string;
  /** Number formatter for tick labels and the legend read-out. */
  format?: (value: number) => string;
  /** Logarithmic scale (base 10). */
  log?: boolean;
};

/** Props of <PlotFrame>. */
export type PlotFrameProps = {
  title: string;
  /** What the plot shows, in words, for screen readers (the canvas itself is not readable). */
  description: string;
  x: PlotAxis & { values: Float64Array | number[] };
  y: PlotAxis;
  /** The line series; empty for a plot that draws its own picture in a hook (then no legend). */
  series: PlotSeries[];
  /** Plot area height in px (the legend is extra). */
  height?: number;
  className?: string;
  /** Last word on the uPlot options (extra scales, hooks, bands); keep the result memoised. */
  configure?: (options: uPlot.Options) => uPlot.Options;
  /** The live chart, e.g. to link cursors between plots. */
  onChart?: (chart: uPlot | null) => void;
  /** Draw the series legend under the plot (default true); stacked plots that share one legend turn it off. */
  legend?: boolean;
};

/** Token colours a plot reads from the nearest themed ancestor. */
export type PlotTheme = {
  background: string;
  grid: string;
  axis: string;
  ink: string;
  line: string;
  accent: string;
  series: string[];
};

/**
 * Reads the plot colours from CSS variables as they apply to `el`, so a plot inside a
 * `data-theme="light"` panel gets the light palette even when the page is dark.
 * @param el any element inside the plot
 */
export function readPlotTheme(el: Element): PlotTheme {
  const style = getComputedStyle(el);
  const read = (name: string) => style.getPropertyValue(name).trim();
  return {
    background: read('--sf-plot-bg'),
    grid: read('--sf-plot-grid'),
    axis: read('--sf-plot-axis'),
    ink: read('--sf-ink'),
    line: read('--sf-line-strong'),
    accent: read('--sf-accent'),
    series: [1, 2, 3, 4, 5, 6].map((i) => read(`--sf-plot-${i}`)),
  };
}

/**
 * Watches the `data-theme` of the nearest themed ancestor and returns it (re-renders on change).
 * Read in a layout effect, so a plot mounting with its data gets its chart before the first paint
 * (a passive effect would leave one painted frame without it, and one more render pass).
 */
function useScopedTheme(ref: RefObject<HTMLElement | null>): string | null {
  const [theme, setTheme] = useState<string | null>(null);
  useLayoutEffect(() => {
    const el = ref.current;
    if (!el) return;
    const scope = el.closest('[data-theme]') ?? document.documentElement;
    const update = () => setTheme(scope.getAttribute('data-theme') ?? 'dark');
    update();
    const observer = new MutationObserver(update);
    observer.observe(scope, { attributes: true, attributeFilter: ['data-theme'] });
    return () => observer.disconnect();
  }, [ref]);
  return theme;
}

/**
 * Tracks an element's content width: measured once in a layout effect (so the chart is built in
 * the mounting pass, before the first paint, not a frame later when the ResizeObserver reports),
 * then followed by a ResizeObserver.
 */
function useWidth(ref: RefObject<HTMLElement | null>): number {
  const [width, setWidth] = useState(0);
  useLayoutEffect(() => {
    const el = ref.current;
    if (!el) return;
    // The content box, as the ResizeObserver's contentRect gives it (so its first report changes nothing).
    const style = getComputedStyle(el);
    const edges = ['paddingLeft', 'paddingRight', 'borderLeftWidth', 'borderRightWidth'] as const;
    setWidth(Math.floor(edges.reduce((w, k) => w - (parseFloat(style[k]) || 0), el.getBoundingClientRect().width)));
    const observer = new ResizeObserver((entries) => {
      const w = entries[0]?.contentRect.width ?? 0;
      setWidth(Math.floor(w));
    });
    observer.observe(el);
    return () => observer.disconnect();
  }, [ref]);
  return width;
}

/** Whether the plot fonts have been seen loaded (then a new plot need not wait a render pass for them). */
let plotFontsLoaded = false;

/** Resolves once the plot font can be drawn on a canvas (canvas text does not wait for fonts). */
function useFontReady(): boolean {
  const [ready, setReady] = useState(() => plotFontsLoaded || typeof document === 'undefined' || !('fonts' in document));
  useEffect(() => {
    if (ready) return;
    let alive = true;
    void Promise.all([document.fonts.load(`11px ${plotFontFamily}`), document.fonts.load(`500 12px ${plotFontFamily}`)])
      .catch(() => undefined)
      .then(() => {
        plotFontsLoaded = true;
        if (alive) setReady(true);
      });
    return () => {
      alive = false;
    };
  }, [ready]);
  return ready;
}

/** Default tick / read-out format: 6 significant digits, exponent form outside 1e-3..1e5, true minus sign. */
export function formatPlotNumber(v: number): string {
  const text = Math.abs(v) >= 1e5 || (Math.abs(v) < 1e-3 && v !== 0) ? v.toExponential(2) : String(Number(v.toPrecision(6)));
  return text.replace('-', '\u2212');
}

function axisTitle(axis: PlotAxis): string {
  return axis.unit ? `${axis.label} (${axis.unit})` : axis.label;
}

/** A legend sample: a short line in the series' colour and dash. */
function LineSample({ color, dash }: { color: string; dash: readonly number[] }) {
  return (
    <svg width="30" height="10" viewBox="0 0 30 10" aria-hidden="true" focusable="false" className="shrink-0">
      <line x1="1" y1="5" x2="29" y2="5" stroke={color} strokeWidth="2" strokeDasharray={dash.length ? dash.join(' ') : undefined} />
    </svg>
  );
}

/**
 * The frame every uPlot chart in Seisift sits in: title, the plot with the token colours of its
 * theme, IBM Plex Mono axes, a light grid, a dash pattern per series, and a legend of our own that
 * shows each series' colour and dash, its value under the cursor, and toggles it on click or Enter.
 * Themes: re-reads the tokens when the nearest `data-theme` changes and rebuilds the chart.
 */
export function PlotFrame({ title, description, x, y, series, height = 220, className, configure, onChart, legend = true }: PlotFrameProps) {
  const boxRef = useRef<HTMLDivElement>(null);
  const scopedTheme = useScopedTheme(boxRef);
  const width = useWidth(boxRef);
  const fontReady = useFontReady();
  const titleId = useId();
  const descId = useId();
  const [cursorIdx, setCursorIdx] = useState<number | null>(null);
  const [hidden, setHidden] = useState<ReadonlySet<number>>(new Set());
  const chartRef = useRef<uPlot | null>(null);
  const frame = useRef<number | null>(null);

  // Tokens change exactly when the scoped theme does, so it is the memo's key.
  const plotTheme = useMemo(() => (scopedTheme !== null && boxRef.current ? readPlotTheme(boxRef.current) : null), [scopedTheme]);

  const styleOf = useCallback(
    (s: PlotSeries, i: number) => {
      const k = s.styleIndex ?? i;
      const palette = plotTheme?.series ?? [];
      return {
        color: palette[k % Math.max(1, palette.length)] ?? 'currentColor',
        dash: s.dash ?? plotDashes[k % plotDashes.length] ?? [],
      };
    },
    [plotTheme],
  );

  const xFormat = x.format ?? formatPlotNumber;
  const yFormat = y.format ?? formatPlotNumber;
  const seriesKey = series.map((s) => `${s.label}:${s.styleIndex ?? ''}:${s.dash?.join(',') ?? ''}`).join('|');

  const hasWidth = width > 0;
  // Built without the width: a width change alone (a scroll bar appearing, a resize) then reaches
  // uplot-react as a new width beside the same option objects, which it applies with setSize
  // instead of building the chart again.
  const unsized = useMemo<uPlot.Options | null>(() => {
    if (!plotTheme || !hasWidth) return null;
    const ratio = typeof window !== 'undefined' ? window.devicePixelRatio || 1 : 1;
    const axis = (a: PlotAxis, format: (v: number) => string): uPlot.Axis => ({
      stroke: plotTheme.axis,
      font: `11px ${plotFontFamily}`,
      labelFont: `500 12px ${plotFontFamily}`,
      label: axisTitle(a),
      labelSize: 18,
      labelGap: 2,
      grid: { stroke: plotTheme.grid, width: 1 },
      ticks: { stroke: plotTheme.grid, width: 1, size: 4 },
      border: { show: true, stroke: plotTheme.line, width: 1 },
      values: (_u, splits) => splits.map((v) => (v === null || v === undefined ? '' : format(v))),
    });
    const base: uPlot.Options = {
      width: 0,
      height,
      legend: { show: false },
      cursor: {
        drag: { x: true, y: false },
        points: { size: 7, width: 1.5, fill: plotTheme.background },
      },
      scales: {
        x: { time: false, distr: x.log ? 3 : 1 },
        y: { distr: y.log ? 3 : 1 },
      },
      axes: [{ ...axis(x, xFormat), size: 26 }, { ...axis(y, yFormat), size: 52 }],
      series: [
        { label: x.label },
        ...series.map((s, i) => {
          const look = styleOf(s, i);
          return {
            label: s.label,
            stroke: look.color,
            width: 1.5,
            dash: look.dash.map((d) => d * ratio),
            show: !hidden.has(i),
            points: { show: false },
          } satisfies uPlot.Series;
        }),
      ],
      hooks: {
        setCursor: [
          (u) => {
            if (frame.current !== null) cancelAnimationFrame(frame.current);
            frame.current = requestAnimationFrame(() => setCursorIdx(u.cursor.idx ?? null));
          },
        ],
      },
    };
    return configure ? configure(base) : base;
    // seriesKey stands for the series' labels and styles; their values go in `data`, not here.
    // eslint-disable-next-line react-hooks/exhaustive-deps -- series, x and y enter through seriesKey and the fields listed
  }, [plotTheme, hasWidth, height, seriesKey, hidden, x.label, x.unit, x.log, y.label, y.unit, y.log, configure, styleOf, xFormat, yFormat]);
  const options = useMemo<uPlot.Options | null>(() => (unsized ? { ...unsized, width } : null), [unsized, width]);

  const data = useMemo<uPlot.AlignedData>(() => [x.values, ...series.map((s) => s.values)], [x.values, series]);

  useEffect(
    () => () => {
      if (frame.current !== null) cancelAnimationFrame(frame.current);
    },
    [],
  );

  const toggle = (i: number) => {
    setHidden((prev) => {
      const next = new Set(prev);
      if (next.has(i)) next.delete(i);
      else next.add(i);
      return next;
    });
  };

  const xAtCursor = cursorIdx !== null ? x.values[cursorIdx] : undefined;

  return (
    <figure className={cx('seisift-plot m-0 rounded-sm border border-line bg-plot-bg', className)} aria-labelledby={titleId}>
      {/* The cursor read-out sits over the caption's right end instead of beside the title: in the
          flow it took width from the title as the mouse came and went, so a long title wrapped and
          unwrapped and the plots below moved under the mouse. */}
      <figcaption className="relative px-3 pt-2">
        <span id={titleId} className="text-sm font-semibold text-ink">
          {title}
        </span>
        {xAtCursor !== undefined ? (
          <span className="absolute top-2 right-3 bg-plot-bg pl-3 font-mono text-xs text-ink-muted tabular" aria-live="off">
            {`${x.label} ${xFormat(xAtCursor)}${x.unit ? ` ${x.unit}` : ''}`}
          </span>
        ) : null}
      </figcaption>
      <p id={descId} className="sr-only">
        {description}
      </p>
      <div ref={boxRef} role="img" aria-labelledby={titleId} aria-describedby={descId} className="px-1" style={{ minHeight: height }}>
        {options && fontReady ? (
          <UplotReact
            options={options}
            data={data}
            onCreate={(chart) => {
              chartRef.current = chart;
              onChart?.(chart);
            }}
            onDelete={() => {
              chartRef.current = null;
              onChart?.(null);
            }}
          />
        ) : null}
      </div>
      {/* A plot that draws its own picture (a heat map) has no line series and so no legend. */}
      {series.length === 0 || !legend ? null : (
        <ul aria-label={`${title}: series`} className="flex flex-wrap gap-x-1 gap-y-0.5 border-t border-line px-2 py-1.5">
          {series.map((s, i) => {
            const look = styleOf(s, i);
            const off = hidden.has(i);
            const v = cursorIdx !== null ? s.values[cursorIdx] : undefined;
            return (
              <li key={`${s.label}-${i}`}>
                <button
                  type="button"
                  aria-pressed={!off}
                  onClick={() => toggle(i)}
                  className={cx('inline-flex h-6 items-center gap-1.5 rounded-xs px-1.5 text-sm hover:bg-raised', off ? 'text-ink-muted line-through' : 'text-ink')}
                >
                  <LineSample color={look.color} dash={look.dash} />
                  <span>{s.label}</span>
                  <span className="min-w-[6ch] text-right font-mono text-xs text-ink-muted tabular">
                    {v === null || v === undefined || off ? '' : `${yFormat(v)}${y.unit ? ` ${y.unit}` : ''}`}
                  </span>
                </button>
              </li>
            );
          })}
        </ul>
      )}
    </figure>
  );
}
