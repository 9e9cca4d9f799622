import { useCallback, useEffect, useMemo, useRef, useState } from 'react';
import { Link } from 'react-router';
import { can } from '@shared/auth/policies';
import type { EventTraces } from '@shared/schemas/event-traces';
import type { EventDetail } from '@shared/schemas/events';
import { paths } from '@client/config/paths';
import { ApiError } from '@client/lib/api-client';
import { useSession } from '@client/lib/session-context';
import { Button } from '@client/components/ui/button';
import { EmptyState } from '@client/components/ui/empty-state';
import { Kbd } from '@client/components/ui/kbd';
import { KeyHelp, isTypingTarget, type KeyBinding } from '@client/components/ui/key-help';
import { Loading } from '@client/components/ui/skeleton';
import { useToast } from '@client/components/ui/toast';
import { EVENT_TRACE_POINTS } from '@client/api/urls';
import { useEvent, useEventChange, useEventGeometry, useEventTraces, usePrefetchEventTraces, type EventChange, type PickInput } from '@client/features/events/api/event-api';
import {
  componentOf,
  defaultUncertaintyS,
  epochToIso,
  isoToEpoch,
  orderStations,
  peakAbs,
  rowScales,
  showsChannel,
  stationOf,
  stepUncertainty,
  type ComponentMode,
  type OrderMode,
  type ScaleMode,
} from '@client/features/events/lib/record-model';
import { RecordSection, type DrawnPick, type RecordCursor, type RecordRow, type StationPrediction } from './record-section';
import { EventMap } from './event-map';
import { ArrivalsPanel, EventLabelPanel, MagnitudePanel, OriginPanel, Panel, SuggestionsPanel } from './event-panels';
import { compareCodes } from '@client/lib/text-order';
import { useAfterFirstPaint } from '@client/lib/use-after-first-paint';

/** The keys of the event screen (shown by "?"). */
export const eventKeyBindings: readonly KeyBinding[] = [
  { keys: ['P'], does: 'P pick at the mouse, on the channel under it (moves the station’s P if there is one)' },
  { keys: ['S'], does: 'S pick at the mouse, on the channel under it (moves the station’s S if there is one)' },
  { keys: ['click'], does: 'Place the armed phase (the P/S buttons); click a pick to select it' },
  { keys: ['[', ']'], does: 'Narrower / wider uncertainty of the selected pick' },
  { keys: ['I', 'E', 'Q'], does: 'Onset of the selected pick: impulsive, emergent, questionable' },
  { keys: ['U', 'D', 'X'], does: 'Polarity of the selected pick: positive (up), negative (down), undecidable' },
  { keys: ['Delete'], does: 'Delete the selected pick' },
  { keys: ['Shift+A'], does: 'Accept every open automatic suggestion' },
  { keys: ['L'], does: 'Relocate now' },
  { keys: ['V', 'H', 'A'], does: 'Show verticals, horizontals (N/E), or all three components' },
  { keys: ['N'], does: 'Per-trace normalisation ↔ true relative amplitude' },
  { keys: ['O'], does: 'Order by distance from the origin ↔ by first arrival' },
  { keys: ['0'], does: 'Whole time range (or double-click the traces); drag across the traces to zoom' },
  { keys: ['?'], does: 'This help' },
];

type Traces = { itemId: number; channels: { streamId: string; units: string; times: Float64Array; values: Float64Array }[] };

/** The member windows' traces in absolute time (s since the epoch), Float64Array for the plot. */
function toTraces(t: EventTraces): Traces[] {
  return t.members.map((m) => ({
    itemId: m.itemId,
    channels: m.channels.map((c) => {
      const start = isoToEpoch(c.startTime);
      return { streamId: c.streamId, units: c.units, times: Float64Array.from(c.times, (s) => start + s), values: Float64Array.from(c.values) };
    }),
  }));
}

/** Props of <EventScreen>. */
export type EventScreenProps = { eventId: number };

/**
 * The event workbench: every station of an event on one record section with its picks, the
 * suggestions, the predictions from the current origin and their residuals; the origin with its
 * uncertainties, relocation, magnitudes, the map and the label. Picks go to the server at once:
 * each one relocates the event there and the screen shows the new origin.
 */
export function EventScreen({ eventId }: EventScreenProps) {
  const event = useEvent(eventId);
  // The traces are the heavy answer: asked for beside the event, not after it.
  usePrefetchEventTraces(eventId, EVENT_TRACE_POINTS);
  const detail = event.data;
  if (event.isPending) return <Loading label="Loading the event…" className="m-6" />;
  if (event.isError || !detail) {
    const notFound = event.error instanceof ApiError && event.error.status === 404;
    return (
      <EmptyState title={notFound ? 'No such event' : 'The event could not be loaded'} className="m-6">
        {notFound ? 'It does not exist, or none of its stations is yours.' : (event.error?.message ?? '')}
      </EmptyState>
    );
  }
  return <Workbench eventId={eventId} detail={detail} />;
}

function Workbench({ eventId, detail }: { eventId: number; detail: EventDetail }) {
  // The side column (map, origin, magnitudes, suggestions, arrivals, label, members) is drawn once
  // the first frame is painted: the record section, the analyst's work, appears first.
  const sideShown = useAfterFirstPaint();
  const { user } = useSession();
  const actor = user ? { roles: user.roles, stationIds: [] } : null;
  const mayPick = can(actor, 'event.pick');
  const mayEdit = can(actor, 'event.edit');
  const mayEvaluate = can(actor, 'review.evaluate');
  const toast = useToast();
  const geometry = useEventGeometry(eventId, detail.origin?.id ?? null);
  const change = useEventChange(eventId);
  const members = useMemo(() => detail.members.filter((m) => !m.removed), [detail.members]);
  const memberIds = useMemo(() => members.map((m) => m.itemId).sort((a, b) => a - b), [members]);
  const traces = useEventTraces(eventId, memberIds, EVENT_TRACE_POINTS);
  const loaded = useMemo(() => (traces.data ? toTraces(traces.data) : []), [traces.data]);

  const [components, setComponents] = useState<ComponentMode>('Z');
  const [order, setOrder] = useState<OrderMode>('distance');
  const [scale, setScale] = useState<ScaleMode>('trace');
  const [zoom, setZoom] = useState<readonly [number, number] | null>(null);
  const [armed, setArmed] = useState<'P' | 'S'>('P');
  const [selected, setSelected] = useState<{ station: string; phase: 'P' | 'S' } | null>(null);
  const [help, setHelp] = useState(false);
  const [lastChangeMs, setLastChangeMs] = useState<number | null>(null);
  const cursor = useRef<RecordCursor | null>(null);

  const run = useCallback(
    (c: EventChange) => {
      const t0 = performance.now();
      change.mutate(c, {
        onSuccess: () => setLastChangeMs(performance.now() - t0),
        onError: (e) => toast.notify({ tone: 'danger', title: 'Not saved', body: e instanceof Error ? e.message : String(e) }),
      });
    },
    [change, toast],
  );

  const residualOf = useMemo(() => {
    const m = new Map<number, number>();
    for (const a of detail.arrivals) if (a.pickId !== null) m.set(a.pickId, a.residualS);
    return m;
  }, [detail.arrivals]);
  const analystPicks = detail.picks.analyst;
  const selectedPick = selected ? (analystPicks.find((p) => stationOf(p.streamId) === selected.station && p.phase === selected.phase) ?? null) : null;

  const drawnPicks: DrawnPick[] = useMemo(() => {
    const taken = new Set(analystPicks.map((p) => `${stationOf(p.streamId)}#${p.phase}`));
    const view = (p: EventDetail['picks']['analyst'][number], kind: 'manual' | 'automatic'): DrawnPick => ({
      id: p.id,
      streamId: p.streamId,
      phase: p.phase,
      time: isoToEpoch(p.time),
      uncertaintyS: p.uncertaintyS,
      kind,
      residualS: residualOf.get(p.id) ?? null,
    });
    return [...analystPicks.map((p) => view(p, 'manual')), ...detail.picks.automatic.filter((p) => !taken.has(`${stationOf(p.streamId)}#${p.phase}`)).map((p) => view(p, 'automatic'))];
  }, [analystPicks, detail.picks.automatic, residualOf]);

  const stationInfo = useMemo(() => new Map((geometry.data?.stations ?? []).map((s) => [s.station, s])), [geometry.data]);
  const predicted = useMemo(() => {
    const m = new Map<string, StationPrediction>();
    for (const s of geometry.data?.stations ?? []) m.set(s.station, { P: s.predicted.P ? isoToEpoch(s.predicted.P) : null, S: s.predicted.S ? isoToEpoch(s.predicted.S) : null });
    return m;
  }, [geometry.data]);

  // The distances as the rows show them (0.1 km): the rows are rebuilt when these change, not on
  // every new origin object (a relocation that moves nothing visible redraws nothing but predictions).
  const hasOrigin = detail.origin !== null;
  const distanceKey = useMemo(() => (hasOrigin ? [...stationInfo].map(([k, s]) => `${k}:${s.distanceKm?.toFixed(1) ?? ''}`).join(' ') : ''), [stationInfo, hasOrigin]);
  const rows: RecordRow[] = useMemo(() => {
    const channels = loaded.flatMap((t) => t.channels).filter((c) => showsChannel(components, c.streamId));
    const byStation = new Map<string, typeof channels>();
    for (const c of channels) byStation.set(stationOf(c.streamId), [...(byStation.get(stationOf(c.streamId)) ?? []), c]);
    const firstPick = (st: string) => {
      const ts = drawnPicks.filter((p) => stationOf(p.streamId) === st).map((p) => p.time);
      return ts.length > 0 ? Math.min(...ts) : null;
    };
    const keys = [...byStation.keys()].map((st) => ({
      station: st,
      distanceKm: hasOrigin ? (stationInfo.get(st)?.distanceKm ?? null) : null,
      firstArrival: firstPick(st) ?? (byStation.get(st)?.[0]?.times[0] ?? null),
    }));
    const ordered = orderStations(keys, order).flatMap((k) => {
      const rank = { Z: 0, N: 1, E: 2, '?': 3 } as const;
      return [...(byStation.get(k.station) ?? [])].sort((a, b) => rank[componentOf(a.streamId)] - rank[componentOf(b.streamId)] || compareCodes(a.streamId, b.streamId)).map((c) => ({ c, k }));
    });
    const scales = rowScales(ordered.map(({ c }) => ({ peak: peakAbs(c.values), units: c.units })), scale);
    return ordered.map(({ c, k }, i) => {
      const f = scales[i] ?? 0;
      const [, sta = '', , cha = ''] = c.streamId.split('.');
      return {
        streamId: c.streamId,
        label: `${sta} ${cha}`,
        detail: k.distanceKm !== null ? `${k.distanceKm.toFixed(1)} km` : c.units,
        times: c.times,
        values: c.values.map((v) => v * f),
      };
    });
    // drawnPicks only matter for the first-arrival order.
    // eslint-disable-next-line react-hooks/exhaustive-deps
  }, [loaded, components, order, scale, distanceKey, order === 'arrival' ? drawnPicks : null]);

  /** Places (or moves) the station's pick of `phase` on the channel under the mouse. */
  const place = useCallback(
    (phase: 'P' | 'S', at: RecordCursor) => {
      if (!mayPick) return;
      const st = stationOf(at.streamId);
      const existing = analystPicks.find((p) => stationOf(p.streamId) === st && p.phase === phase);
      const pick: PickInput = {
        streamId: at.streamId,
        phase,
        time: epochToIso(at.time),
        uncertaintyS: existing?.uncertaintyS ?? defaultUncertaintyS(phase),
        onset: (existing?.onset as PickInput['onset'] | undefined) ?? 'questionable',
        polarity: (existing?.polarity as PickInput['polarity'] | undefined) ?? 'undecidable',
      };
      setSelected({ station: st, phase });
      run(existing ? { kind: 'update-pick', pickId: existing.id, pick } : { kind: 'add-pick', pick });
    },
    [analystPicks, mayPick, run],
  );

  const editSelected = useCallback(
    (patch: Partial<PickInput>) => {
      if (!selectedPick || !mayPick) return;
      const base: PickInput = {
        streamId: selectedPick.streamId,
        phase: selectedPick.phase,
        time: selectedPick.time,
        uncertaintyS: selectedPick.uncertaintyS,
        onset: (selectedPick.onset as PickInput['onset'] | null) ?? 'questionable',
        polarity: (selectedPick.polarity as PickInput['polarity'] | null) ?? 'undecidable',
      };
      run({ kind: 'update-pick', pickId: selectedPick.id, pick: { ...base, ...patch } });
    },
    [selectedPick, mayPick, run],
  );

  useEffect(() => {
    const onKey = (e: KeyboardEvent) => {
      if (isTypingTarget(e.target) || e.ctrlKey || e.metaKey || e.altKey) return;
      const k = e.key;
      const at = cursor.current;
      let handled = true;
      if ((k === 'p' || k === 'P') && !e.shiftKey) {
        if (at) place('P', at);
      } else if (k === 's' && !e.shiftKey) {
        if (at) place('S', at);
      } else if (k === 'A' && e.shiftKey) {
        if (mayPick) run({ kind: 'accept' });
      } else if (k === 'a') setComponents('ZNE');
      else if (k === 'v') setComponents('Z');
      else if (k === 'h') setComponents('NE');
      else if (k === 'n') setScale((s) => (s === 'trace' ? 'relative' : 'trace'));
      else if (k === 'o') setOrder((o) => (o === 'distance' ? 'arrival' : 'distance'));
      else if (k === '0' || k === 'Escape') setZoom(null);
      else if (k === 'l') {
        if (mayEdit) run({ kind: 'relocate' });
      } else if (k === '[' || k === ']') {
        if (selectedPick) editSelected({ uncertaintyS: stepUncertainty(selectedPick.uncertaintyS, k === ']' ? 1 : -1) });
      } else if (k === 'i') editSelected({ onset: 'impulsive' });
      else if (k === 'e') editSelected({ onset: 'emergent' });
      else if (k === 'q') editSelected({ onset: 'questionable' });
      else if (k === 'u') editSelected({ polarity: 'positive' });
      else if (k === 'd') editSelected({ polarity: 'negative' });
      else if (k === 'x') editSelected({ polarity: 'undecidable' });
      else if (k === 'Delete' || k === 'Backspace') {
        if (selectedPick && mayPick) {
          run({ kind: 'delete-pick', pickId: selectedPick.id });
          setSelected(null);
        }
      } else if (k === '?') setHelp(true);
      else handled = false;
      if (handled) e.preventDefault();
    };
    window.addEventListener('keydown', onKey);
    return () => window.removeEventListener('keydown', onKey);
  }, [place, run, mayPick, mayEdit, selectedPick, editSelected]);

  const onSelectPick = useCallback(
    (id: number) => {
      const p = analystPicks.find((x) => x.id === id);
      if (p) setSelected({ station: stationOf(p.streamId), phase: p.phase });
    },
    [analystPicks],
  );
  const onCursor = useCallback((at: RecordCursor | null) => {
    cursor.current = at;
  }, []);
  const onClickTrace = useCallback((at: RecordCursor) => place(armed, at), [place, armed]);

  const e = detail.event;
  const loading = traces.isPending;
  const failed = traces.isError ? traces.error : null;
  const title = detail.origin ? `Event ${e.id} · ${detail.origin.time.slice(0, 19).replace('T', ' ')} UTC` : `Event ${e.id} · first arrival ${e.firstArrival.slice(0, 19).replace('T', ' ')} UTC`;
  return (
    <div className="flex flex-col gap-3 p-4" data-testid="event-screen" data-event-version={e.version}>
      <header className="flex flex-wrap items-baseline justify-between gap-2">
        <div>
          <h1 className="text-xl font-semibold">{title}</h1>
          <p className="text-sm text-ink-muted">
            {e.network} · {members.length} stations · {e.eventType ? `${e.eventType} (${e.typeCertainty ?? 'suspected'})` : 'not labelled'} · {e.evaluationStatus}
            {detail.magnitude ? ` · ${detail.magnitude.type} ${detail.magnitude.value.toFixed(1)}` : ''}
          </p>
        </div>
        <Link className="text-sm underline" to={paths.queue.href}>
          Back to the queue
        </Link>
      </header>
      <aside aria-label="Caution about locations and magnitudes" className="rounded-sm border border-line border-l-4 border-l-warn bg-surface px-3 py-2 text-sm" data-testid="event-caution">
        {detail.caution}
      </aside>
      <div className="grid gap-3 xl:grid-cols-[minmax(0,1fr)_380px]">
        <section aria-label="Record section" className="flex min-w-0 flex-col gap-2 rounded-sm border border-line bg-surface p-2">
          <div className="flex flex-wrap items-center gap-2 text-sm" role="toolbar" aria-label="Record section controls">
            <span className="text-ink-muted">Components</span>
            {(['Z', 'NE', 'ZNE'] as const).map((m) => (
              <Button key={m} size="sm" variant={components === m ? 'primary' : 'secondary'} aria-pressed={components === m} shortcut={{ Z: 'V', NE: 'H', ZNE: 'A' }[m]} onClick={() => setComponents(m)}>
                {{ Z: 'Vertical', NE: 'N/E', ZNE: 'All three' }[m]}
              </Button>
            ))}
            <span className="ml-2 text-ink-muted">Amplitude</span>
            <Button size="sm" shortcut="N" aria-pressed={scale === 'relative'} onClick={() => setScale((s) => (s === 'trace' ? 'relative' : 'trace'))}>
              {scale === 'trace' ? 'Each trace normalised' : 'True relative'}
            </Button>
            <span className="ml-2 text-ink-muted">Order</span>
            <Button size="sm" shortcut="O" aria-pressed={order === 'arrival'} onClick={() => setOrder((o) => (o === 'distance' ? 'arrival' : 'distance'))}>
              {order === 'distance' && detail.origin ? 'By distance' : 'By first arrival'}
            </Button>
            {mayPick ? (
              <>
                <span className="ml-2 text-ink-muted">Click places</span>
                {(['P', 'S'] as const).map((ph) => (
                  <Button key={ph} size="sm" variant={armed === ph ? 'primary' : 'secondary'} aria-pressed={armed === ph} onClick={() => setArmed(ph)}>
                    {ph}
                  </Button>
                ))}
              </>
            ) : null}
            <Button size="sm" variant="quiet" shortcut="0" onClick={() => setZoom(null)}>
              Whole range
            </Button>
            <Button size="sm" variant="quiet" shortcut="?" onClick={() => setHelp(true)}>
              Keys
            </Button>
          </div>
          <p className="text-xs text-ink-muted">
            Pre-processed traces (demeaned, detrended, tapered), UTC on the time axis. Solid line with a letter: an analyst’s pick (shaded ±1 σ, residual beside it); dotted “P?”/“S?”: automatic
            suggestion; dashed with a lower-case letter: first arrival predicted from the current origin. Point at a trace and press <Kbd>P</Kbd> or <Kbd>S</Kbd>: the pick goes on that channel.
          </p>
          {failed ? <p className="text-sm text-danger">The traces could not be loaded: {failed.message}</p> : null}
          {loading && rows.length === 0 ? <Loading label="Loading the traces…" /> : null}
          {rows.length > 0 ? (
            <RecordSection rows={rows} picks={drawnPicks} predicted={predicted} selectedPickId={selectedPick?.id ?? null} zoom={zoom} onZoom={setZoom} onCursor={onCursor} onClickTrace={onClickTrace} onSelectPick={onSelectPick} />
          ) : null}
          <div className="flex flex-wrap items-center gap-3 text-sm" aria-live="polite" data-testid="pick-status">
            {selectedPick ? (
              <span>
                Selected: <strong className="font-mono">{selectedPick.streamId}</strong> {selectedPick.phase} at <span className="font-mono">{selectedPick.time.slice(11)}</span> ± {selectedPick.uncertaintyS.toFixed(2)} s ·{' '}
                {selectedPick.onset ?? 'questionable'} · polarity {selectedPick.polarity ?? 'undecidable'}
              </span>
            ) : (
              <span className="text-ink-muted">No pick selected.</span>
            )}
            {change.isPending ? <span>Saving and relocating…</span> : lastChangeMs !== null ? <span className="text-ink-muted">Last change and relocation: {Math.round(lastChangeMs)} ms</span> : null}
          </div>
        </section>
        <div className="flex min-w-0 flex-col gap-3">
          {sideShown ? (
            <>
              {geometry.data ? <EventMap geometry={geometry.data} origin={detail.origin} /> : <Loading label="Loading the map…" rows={2} />}
              <OriginPanel detail={detail} mayEdit={mayEdit} busy={change.isPending} onRelocate={(fixedDepthKm) => run({ kind: 'relocate', ...(fixedDepthKm === undefined ? {} : { fixedDepthKm }) })} />
              <MagnitudePanel detail={detail} />
              <SuggestionsPanel detail={detail} mayPick={mayPick} busy={change.isPending} onAccept={(ids) => run({ kind: 'accept', ...(ids ? { pickIds: ids } : {}) })} />
              <ArrivalsPanel detail={detail} />
              <EventLabelPanel key={e.version} detail={detail} mayEdit={mayEdit} mayEvaluate={mayEvaluate} busy={change.isPending} onSave={(v) => run({ kind: 'label', ...v })} />
              <Panel title="Member windows">
                <ul className="text-sm">
                  {members.map((m) => (
                    <li key={m.itemId}>
                      <Link className="font-mono underline" to={`${paths.queueItem.href}/${m.itemId}`}>
                        {m.station}
                      </Link>{' '}
                      <span className="text-ink-muted">window from {m.windowStart.slice(11, 19)} · {m.source}</span>
                    </li>
                  ))}
                </ul>
              </Panel>
            </>
          ) : (
            <Loading label="Loading the map and the panels…" rows={4} />
          )}
        </div>
      </div>
      <KeyHelp open={help} onClose={() => setHelp(false)} title="Event screen keys" bindings={eventKeyBindings} />
    </div>
  );
}
