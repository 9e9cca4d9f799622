import { useEffect, useState } from 'react';
import { displayUnits, type DisplayUnits } from '@shared/schemas/queue';
import { Button } from '@client/components/ui/button';
import { Input } from '@client/components/ui/input';
import { Kbd } from '@client/components/ui/kbd';
import { Select } from '@client/components/ui/select';
import { cx } from '@client/lib/cx';
import { bandPresets, traceViewNames, traceViews, unitNames, type DisplayFilter, type TraceView } from '@client/features/review/lib/display-settings';

/** Props of <FilterBar>. */
export type FilterBarProps = {
  view: TraceView;
  onView: (v: TraceView) => void;
  filter: DisplayFilter;
  /** A new display filter (the view becomes 'filter'). */
  onFilter: (f: DisplayFilter) => void;
  gain: number;
  onGain: (step: 1 | -1) => void;
  normalise: boolean;
  onNormalise: (on: boolean) => void;
};

/** Id of the low-edge field (key F focuses it). */
export const filterLowFieldId = 'review-filter-low';

/**
 * The traces' controls, one line above them: the view (the engine's curves or the analyst's own
 * filter; key B), the display filter — band preset or custom low/high edges, causal or zero-phase
 * (Z), units (U: counts, velocity, displacement, Wood-Anderson from the station's response) — the
 * gain ([ and ]) and per-trace normalisation (N). A custom band is applied with Enter or the Apply
 * button, so typing 1 of "15" does not redraw.
 */
export function FilterBar({ view, onView, filter, onFilter, gain, onGain, normalise, onNormalise }: FilterBarProps) {
  const [low, setLow] = useState(filter.band ? String(filter.band[0]) : '');
  const [high, setHigh] = useState(filter.band ? String(filter.band[1]) : '');
  const [problem, setProblem] = useState<string | null>(null);
  useEffect(() => {
    setLow(filter.band ? String(filter.band[0]) : '');
    setHigh(filter.band ? String(filter.band[1]) : '');
  }, [filter.band]);
  const preset = bandPresets.find((p) => (p.band === null ? filter.band === null : filter.band !== null && p.band[0] === filter.band[0] && p.band[1] === filter.band[1]));
  const apply = () => {
    const lo = Number(low);
    const hi = Number(high);
    if (low.trim() === '' && high.trim() === '') {
      setProblem(null);
      onFilter({ ...filter, band: null });
      return;
    }
    if (!(Number.isFinite(lo) && Number.isFinite(hi) && lo > 0 && lo < hi)) {
      setProblem('The band needs 0 < low < high (Hz).');
      return;
    }
    setProblem(null);
    onFilter({ ...filter, band: [lo, hi] });
  };
  return (
    <div className="flex flex-col gap-0.5 rounded-sm border border-line bg-surface px-2 py-1" data-testid="filter-bar">
      <div className="flex flex-wrap items-center gap-x-3 gap-y-1.5">
        <div role="radiogroup" aria-label="Trace shown (key B)" className="flex items-center gap-0.5">
          {traceViews.map((v) => (
            <button
              key={v}
              type="button"
              role="radio"
              aria-checked={view === v}
              onClick={() => onView(v)}
              className={cx('h-7 rounded-xs px-2 text-sm', view === v ? 'bg-raised font-semibold text-ink underline underline-offset-4' : 'text-ink-muted hover:bg-raised hover:text-ink')}
            >
              {traceViewNames[v]}
            </button>
          ))}
          <Kbd className="ml-1">B</Kbd>
        </div>
        <span className="h-5 border-l border-line" aria-hidden="true" />
        <label className="flex items-center gap-1 text-sm">
          <span>Band</span>
          <span className="inline-block" style={{ width: '7rem' }}>
          <Select
            className="h-7"
            aria-label="Band preset"
            value={preset ? preset.name : 'custom'}
            onChange={(e) => {
              const p = bandPresets.find((b) => b.name === e.target.value);
              if (p) onFilter({ ...filter, band: p.band });
            }}
          >
            {bandPresets.map((p) => (
              <option key={p.name}>{p.name}</option>
            ))}
            {preset ? null : <option>custom</option>}
          </Select>
          </span>
        </label>
        <form
          className="flex items-center gap-1 text-sm"
          aria-label="Custom band"
          onSubmit={(e) => {
            e.preventDefault();
            apply();
            // Back to the traces' keys (B, Z, P…): a focused field would take them as text.
            if (document.activeElement instanceof HTMLElement) document.activeElement.blur();
          }}
        >
          <label htmlFor={filterLowFieldId}>low</label>
          <Input id={filterLowFieldId} mono inputMode="decimal" className="h-7" style={{ width: '4.5rem' }} value={low} onChange={(e) => setLow(e.target.value)} aria-describedby="review-filter-hint" />
          <label htmlFor="review-filter-high">high Hz</label>
          <Input id="review-filter-high" mono inputMode="decimal" className="h-7" style={{ width: '4.5rem' }} value={high} onChange={(e) => setHigh(e.target.value)} aria-describedby="review-filter-hint" />
          <Button size="sm" type="submit">
            Apply
          </Button>
          <Kbd>F</Kbd>
        </form>
        <label className="flex items-center gap-1 text-sm">
          <span>Phase</span>
          <span className="inline-block" style={{ width: '8rem' }}>
          <Select className="h-7" value={filter.phase} onChange={(e) => onFilter({ ...filter, phase: e.target.value === 'zero-phase' ? 'zero-phase' : 'causal' })}>
            <option value="causal">causal</option>
            <option value="zero-phase">zero-phase</option>
          </Select>
          </span>
          <Kbd>Z</Kbd>
        </label>
        <label className="flex items-center gap-1 text-sm">
          <span>Units</span>
          <span className="inline-block" style={{ width: '9rem' }}>
          <Select
            className="h-7"
            value={filter.units}
            onChange={(e) => {
              const u = displayUnits.find((x) => x === e.target.value);
              if (u) onFilter({ ...filter, units: u satisfies DisplayUnits });
            }}
          >
            {displayUnits.map((u) => (
              <option key={u} value={u}>
                {unitNames[u]}
              </option>
            ))}
          </Select>
          </span>
          <Kbd>U</Kbd>
        </label>
        <span className="h-5 border-l border-line" aria-hidden="true" />
        <span className="flex items-center gap-1 text-sm">
          <Button size="sm" variant="quiet" aria-label="Gain down" onClick={() => onGain(-1)}>
            −
          </Button>
          <span className="min-w-[4ch] text-center font-mono" aria-live="polite" data-testid="gain">
            ×{gain}
          </span>
          <Button size="sm" variant="quiet" aria-label="Gain up" onClick={() => onGain(1)}>
            +
          </Button>
          <Kbd>[</Kbd>
          <Kbd>]</Kbd>
        </span>
        <label className="flex items-center gap-1.5 text-sm">
          <input type="checkbox" checked={normalise} onChange={(e) => onNormalise(e.target.checked)} className="size-4 accent-[var(--sf-accent)]" />
          <span>normalise each trace</span>
          <Kbd>N</Kbd>
        </label>
      </div>
      <p id="review-filter-hint" className="text-xs text-ink-muted">
        {problem ? (
          <strong className="text-ink" role="alert">
            {problem}
          </strong>
        ) : (
          <>
            Your filter is for display only: the flag, score and metrics come from the engine’s causal bands ({filter.phase === 'zero-phase' ? 'zero-phase: no delay, but it rings before a sharp onset, so pick onsets on causal' : 'causal, as the engine'}).
          </>
        )}
      </p>
    </div>
  );
}
