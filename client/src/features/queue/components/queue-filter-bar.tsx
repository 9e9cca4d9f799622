import { useEffect, useState } from 'react';
import { flags } from '@shared/schemas/flags';
import { itemStates, type ItemState } from '@shared/schemas/item-states';
import { labelFilterValues } from '@shared/schemas/queue';
import type { QueueFilters } from '@client/api/urls';
import { workingStates } from '@client/api/urls';
import { Input } from '@client/components/ui/input';
import { Select } from '@client/components/ui/select';
import { UtcTimeInput } from '@client/components/ui/utc-time-input';
import { formatCount } from '@client/lib/text-order';

/** Props of <QueueFilterBar>. */
type FilterBarProps = {
  filters: QueueFilters;
  setFilters: (f: Partial<QueueFilters>) => void;
  setStateParam: (v: string) => void;
  counts: Record<ItemState, number> | undefined;
};

const stateChoice = (f: QueueFilters): string => {
  if (!f.state) return 'all';
  if (f.state.length === workingStates.length && workingStates.every((s) => f.state?.includes(s))) return '';
  return f.state.join(',');
};

/** The filter bar: every filter of GET /api/queue, written to the URL as it changes. */
export function QueueFilterBar({ filters, setFilters, setStateParam, counts }: FilterBarProps) {
  const [station, setStation] = useState((filters.station ?? []).join(','));
  useEffect(() => setStation((filters.station ?? []).join(',')), [filters.station]);
  const countOf = (s: ItemState) => (counts ? ` (${formatCount(counts[s])})` : '');
  const waiting = counts ? workingStates.reduce((n, s) => n + counts[s], 0) : undefined;
  return (
    <form className="flex flex-wrap items-end gap-3" aria-label="Queue filters" onSubmit={(e) => e.preventDefault()}>
      <label className="flex w-72 flex-col gap-1 text-sm font-medium">
        State
        <Select value={stateChoice(filters)} onChange={(e) => setStateParam(e.target.value)} name="state">
          <option value="">Open: new, returned, in review{waiting === undefined ? '' : ` (${waiting})`}</option>
          {itemStates.map((s) => (
            <option key={s} value={s}>
              {s}
              {countOf(s)}
            </option>
          ))}
          <option value="all">Every state</option>
        </Select>
      </label>
      <label className="flex w-44 flex-col gap-1 text-sm font-medium">
        Station
        <Input
          value={station}
          placeholder="any (e.g. KV01,KV04)"
          onChange={(e) => setStation(e.target.value.toUpperCase())}
          onBlur={() => setFilters({ station: station.split(',').map((s) => s.trim()).filter(Boolean) })}
          onKeyDown={(e) => {
            if (e.key === 'Enter') setFilters({ station: station.split(',').map((s) => s.trim()).filter(Boolean) });
          }}
          mono
        />
      </label>
      <label className="flex w-40 flex-col gap-1 text-sm font-medium">
        Flag
        <Select value={filters.flag?.[0] ?? ''} onChange={(e) => setFilters({ flag: e.target.value ? [e.target.value as (typeof flags)[number]] : undefined })}>
          <option value="">Any flag</option>
          {flags.map((f) => (
            <option key={f}>{f}</option>
          ))}
        </Select>
      </label>
      <label className="flex w-44 flex-col gap-1 text-sm font-medium">
        Label
        <Select value={filters.label?.[0] ?? ''} onChange={(e) => setFilters({ label: e.target.value ? [e.target.value as (typeof labelFilterValues)[number]] : undefined })}>
          <option value="">Any label</option>
          <option value="none">No label yet</option>
          <option value="noise">Noise (dismissed)</option>
          {labelFilterValues
            .filter((l) => l !== 'none' && l !== 'noise')
            .map((l) => (
              <option key={l}>{l}</option>
            ))}
        </Select>
      </label>
      <NumberFilter label="Score from" value={filters.scoreMin} onChange={(v) => setFilters({ scoreMin: v })} />
      <NumberFilter label="Score to" value={filters.scoreMax} onChange={(v) => setFilters({ scoreMax: v })} />
      <TimeFilter label="Window from (UTC)" value={filters.from} onChange={(v) => setFilters({ from: v })} />
      <TimeFilter label="Window to (UTC)" value={filters.to} onChange={(v) => setFilters({ to: v })} />
      <label className="flex w-44 flex-col gap-1 text-sm font-medium">
        Order
        <Select value={filters.sort} onChange={(e) => setFilters({ sort: e.target.value === 'age' ? 'age' : 'score' })}>
          <option value="score">Highest score first</option>
          <option value="age">Waiting longest first</option>
        </Select>
      </label>
    </form>
  );
}

/** A number filter, applied on Enter or when the field is left (empty: no bound). */
function NumberFilter({ label, value, onChange }: { label: string; value: number | undefined; onChange: (v: number | undefined) => void }) {
  const [text, setText] = useState(value === undefined ? '' : String(value));
  useEffect(() => setText(value === undefined ? '' : String(value)), [value]);
  const commit = () => {
    const n = text.trim() === '' ? undefined : Number(text);
    onChange(n !== undefined && Number.isFinite(n) ? n : undefined);
  };
  return (
    <label className="flex w-24 flex-col gap-1 text-sm font-medium">
      {label}
      <Input value={text} inputMode="decimal" onChange={(e) => setText(e.target.value)} onBlur={commit} onKeyDown={(e) => e.key === 'Enter' && commit()} mono />
    </label>
  );
}

/** A UTC time filter. */
function TimeFilter({ label, value, onChange }: { label: string; value: string | undefined; onChange: (v: string | undefined) => void }) {
  // UTC ISO 8601 text like every other time in Seisift (the browser's date-time picker shows the
  // reader's locale); empty leaves this end of the window open.
  return <UtcTimeInput optional label={label} value={value} onChange={onChange} className="font-medium" />;
}
