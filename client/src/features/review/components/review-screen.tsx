import { useCallback, useEffect, useMemo, useRef, useState } from 'react';
import { Link, useBlocker } from 'react-router';
import { sortChannels } from '@shared/channel-order';
import { displayUnits } from '@shared/schemas/queue';
import { can } from '@shared/auth/policies';
import { roleSchema, type Role } from '@shared/auth/roles';
import { noiseReasons, quakemlEventTypes } from '@shared/schemas/label';
import { useCandidateEvent, useReviewNote } from '@client/api/queue/candidate-events';
import { useMe } from '@client/api/queue/get-queue';
import { postKeepAlive } from '@client/api/queue/item-actions';
import { liveArrivals } from '@client/api/queue/live-patch';
import { EmptyState } from '@client/components/ui/empty-state';
import { paths } from '@client/config/paths';
import { KeyHelp } from '@client/components/ui/key-help';
import { Loading } from '@client/components/ui/skeleton';
import { useToast } from '@client/components/ui/toast';
import { analysisView, useItem, useTraces } from '@client/features/review/api/get-item';
import { useItemMatches } from '@client/features/review/api/get-matches';
import { usePrefetchQueueItem } from '@client/features/queue/hooks/use-prefetch-item';
import { REVIEW_TRACE_POINTS } from '@client/api/urls';
import { useQueueNeighbours } from '@client/features/review/hooks/use-queue-neighbours';
import { useReviewActions } from '@client/features/review/hooks/use-review-actions';
import { useReviewDraft } from '@client/features/review/hooks/use-review-draft';
import { useReviewKeys } from '@client/features/review/hooks/use-review-keys';
import { useTraceView } from '@client/features/review/hooks/use-trace-view';
import { useAfterFirstPaint } from '@client/lib/use-after-first-paint';
import { screenOpened } from '@client/lib/screen-opening';
import { cycle, distanceFromSMinusP, sMinusP, stepGain, traceViews, type DisplayFilter, type TraceView } from '@client/features/review/lib/display-settings';
import { unsavedWork } from '@client/features/review/lib/review-draft';
import { FilterBar, filterLowFieldId } from './filter-bar';
import { SessionCaution } from './session-caution';
import { DraftBanner, FlagReasons, ReturnNote, SpectrumSection } from './assessment-notes';
import { useEventIndex } from '@client/api/events/event-index';
import { GroupLabelDialog, GroupPanel } from './event-group-panel';
import { LabelForm, reviewFormDefaults, useReviewForm } from './label-form';
import { MatchesPanel } from './matches-panel';
import { Metrics } from './metrics-panel';
import { EscalateDialog, LeaveDialog } from './review-dialogs';
import { ReviewHeader, ReviewToolbar } from './review-header';
import { reviewKeysHelp } from './review-keys';
import { SpectrogramPanel } from './spectrogram-panel';
import { pickSeconds, TracePanel, type SignalSegments } from './trace-panel';

/**
 * The review screen of one queue item: who holds it, the flag and why, the traces of every
 * channel with both bands and STA/LTA (linked cursor and zoom), spectrum with noise models,
 * spectrogram, metrics, picks and the label form — worked from the keyboard (review-keys.ts).
 */
export function ReviewScreen({ itemId }: { itemId: number }) {
  const item = useItem(itemId);
  const matches = useItemMatches(itemId);
  const me = useMe();
  const toast = useToast();
  const { neighbour, go, search } = useQueueNeighbours(itemId, me?.id);
  const [help, setHelp] = useState(false);
  const [leaving, setLeaving] = useState(false);
  const [groupConfirm, setGroupConfirm] = useState(false);
  const form = useReviewForm();
  const picks = form.watch('picks') ?? [];

  useEffect(() => liveArrivals.seen(itemId), [itemId]);
  const group = useCandidateEvent(item.data?.candidateEvent?.id ?? null);
  const note = useReviewNote(itemId, item.data !== undefined && (item.data.state === 'returned' || item.data.state === 'confirmed' || item.data.state === 'in review' || item.data.state === 'labelled'));
  // The policy module decides which controls show (the server checks every request anyway).
  // Operators may view their stations' items but not work them: no claim, label, dismiss or escalate.
  const actor = me ? { roles: me.roles.filter((r): r is Role => roleSchema.safeParse(r).success), stationIds: [] } : null;
  const mayWork = can(actor, 'queue.claim') && can(actor, 'queue.label');
  const mayLabelGroup = can(actor, 'queue.label');
  const eventIndex = useEventIndex(can(actor, 'event.view'));
  // A window an analyst put into an event (no candidate group joined it) links its event too.
  const heldBy = item.data && !item.data.candidateEvent ? (eventIndex.data?.byItem.get(item.data.id) ?? null) : null;

  const detail = item.data;
  const analysis = useMemo(() => analysisView(detail?.analysis), [detail?.analysis]);
  const windowStartMs = detail ? Date.parse(detail.windowStart) : 0;
  const durationS = detail ? (Date.parse(detail.windowEnd) - windowStartMs) / 1000 : 0;
  const mine = detail?.state === 'in review' && detail.claimedBy?.id === me?.id;
  const claimable = mayWork && (detail?.state === 'new' || detail?.state === 'returned');
  const writable = mine || claimable;

  const draft = useReviewDraft(form, me?.id, itemId, detail !== undefined && writable);
  const advance = useCallback(() => go(neighbour(1)?.id), [go, neighbour]);
  // Once saved, the form is emptied with the draft (so leaving afterwards does not ask).
  const act = useReviewActions({ detail, mine, claimable, writable, group: group.data }, advance, draft.discardDraft);
  const tv = useTraceView(form, windowStartMs, durationS);
  // The traces' view, chosen on the fly (lib/display-settings.ts); it stays as the analyst moves on.
  const [traceView, setTraceView] = useState<TraceView>('trace');
  const [filter, setFilter] = useState<DisplayFilter>({ band: [1, 5], phase: 'causal', units: 'velocity' });
  const [gain, setGain] = useState(1);
  const [normalise, setNormalise] = useState(true);
  const [sgIndex, setSgIndex] = useState(0);
  const traces = useTraces(itemId, tv.view?.from ?? null, tv.view?.to ?? null, REVIEW_TRACE_POINTS, traceView === 'filter' ? filter : null);
  // The next item, fetched once this one has had its first frames (not during them).
  usePrefetchQueueItem(neighbour(1)?.id, 400);
  // The spectrum (a plot beside the traces, below the label form) waits for the traces' first paint.
  const afterFirstPaint = useAfterFirstPaint();
  // Drawn (the item and its traces, or why not): changes held while this screen opened may land.
  const drawn = item.isError || (detail !== undefined && (traces.data !== undefined || traces.isError));
  useEffect(() => {
    if (drawn) screenOpened();
  }, [drawn]);
  const leadTraces = traces.data?.channels.find((c) => c.streamId.endsWith('Z')) ?? traces.data?.channels[0];
  const orderedTraces = useMemo(() => sortChannels(traces.data?.channels ?? [], (c) => c.streamId), [traces.data?.channels]);
  const sgTraces = orderedTraces.length > 0 ? orderedTraces[sgIndex % orderedTraces.length] : undefined;
  const applyFilter = (f: DisplayFilter) => {
    setFilter(f);
    setTraceView('filter');
  };

  // Leaving the item (a link, J/K, Esc, the back button) with unsaved work asks first; the draft is kept either way.
  const unsavedRef = useRef<() => boolean>(() => false);
  unsavedRef.current = () => unsavedWork(form.getValues(), reviewFormDefaults).any;
  const blocker = useBlocker(({ currentLocation, nextLocation }) => currentLocation.pathname !== nextLocation.pathname && unsavedRef.current());

  // Keep a claim alive while this screen is open (the server lets idle claims lapse).
  useEffect(() => {
    if (!mine) return;
    const t = setInterval(() => void postKeepAlive(itemId), 60_000);
    return () => clearInterval(t);
  }, [mine, itemId]);

  /** What leaving now would lose (drives the Esc warning). */
  const unsaved = () => unsavedWork(form.getValues(), reviewFormDefaults);
  const submitLabel = () => void form.handleSubmit(act.label)();
  const labelButton = useRef<HTMLButtonElement>(null);
  const submitDismiss = () => void form.handleSubmit(act.dismiss)();
  /**
   * Key M: the best labelled match's label goes into the form (event type, or the noise reason for
   * a match to dismissed noise). Nothing is saved: for an event type the Label button takes the focus,
   * so the analyst confirms with Enter (or changes the form first); for noise, D dismisses.
   */
  const takeMatchedLabel = () => {
    const s = matches.data?.suggestion;
    if (!s) {
      toast.notify({ tone: 'info', title: 'No labelled match', body: 'No earlier labelled window at this station resembles this one.', durationMs: 3000 });
      return;
    }
    if (s.kind === 'event') {
      const type = quakemlEventTypes.find((t) => t === s.eventType);
      if (!type) return;
      form.setValue('eventType', type, { shouldDirty: true });
      labelButton.current?.focus();
      toast.notify({ tone: 'info', title: `Label set to ${type}`, body: `From the best match (${s.value.toFixed(2)}). Press Enter to label, or change it first.`, durationMs: 4000 });
    } else {
      const reason = noiseReasons.find((r) => r === s.noiseReason);
      if (!reason) return;
      form.setValue('noiseReason', reason, { shouldDirty: true });
      toast.notify({ tone: 'info', title: `Noise reason set to ${reason}`, body: `From the best match (${s.value.toFixed(2)}). Press D to dismiss.`, durationMs: 4000 });
    }
  };

  useReviewKeys({
    loaded: detail !== undefined,
    mayWork,
    onViewOnly: () => toast.notify({ tone: 'info', title: 'View only', body: 'Your role can look at this item but not claim, label, dismiss or escalate it.', durationMs: 3000 }),
    next: advance,
    previous: () => go(neighbour(-1)?.id),
    claim: () => {
      if (claimable) act.claim();
      else if (detail) toast.notify({ tone: 'warn', title: mine ? 'You already hold this item' : `Item ${detail.id} is ${detail.state}` });
    },
    mayRelease: mine,
    release: act.release,
    labelAs: (type) => {
      form.setValue('eventType', type);
      submitLabel();
    },
    dismiss: submitDismiss,
    dismissAs: (reason) => {
      form.setValue('noiseReason', reason);
      submitDismiss();
    },
    escalate: () => act.escalation.setOpen(true),
    takeMatchedLabel,
    pick: (phase) => tv.keyPick(phase, leadTraces),
    zoom: tv.zoom,
    resetZoom: tv.resetZoom,
    leave: () => go(undefined),
    help: () => setHelp(true),
    enter: submitLabel,
    cycleView: (step) => setTraceView((v) => cycle(traceViews, v, step)),
    focusFilter: () => {
      setTraceView('filter');
      document.getElementById(filterLowFieldId)?.focus();
    },
    togglePhase: () => applyFilter({ ...filter, phase: filter.phase === 'causal' ? 'zero-phase' : 'causal' }),
    cycleUnits: () => applyFilter({ ...filter, units: cycle(displayUnits, filter.units, 1) }),
    gain: (step) => setGain((g) => stepGain(g, step)),
    toggleNormalise: () => setNormalise((n) => !n),
    cycleSpectrogram: () => setSgIndex((i) => (i + 1) % Math.max(1, orderedTraces.length)),
  });
  useEffect(() => {
    if (blocker.state === 'blocked') setLeaving(true);
  }, [blocker.state]);

  if (item.isPending) return <Loading label={`Loading item ${itemId}…`} className="m-6" />;
  if (item.isError || !detail) return <EmptyState title={`Item ${itemId} could not be loaded`} className="m-6">{item.error?.message}</EmptyState>;

  const segments: Record<string, SignalSegments | null> = Object.fromEntries((analysis?.channels ?? []).map((c) => [c.id, c.signalSpectrum ?? null]));
  const next = neighbour(1);
  const prev = neighbour(-1);
  const returned = note.data?.note;
  const sp = sMinusP(picks.map((p) => ({ phase: p.phase, seconds: pickSeconds(p, windowStartMs) })));

  return (
    <div className="flex flex-col gap-2" data-item-id={detail.id} data-version={detail.version}>
      <SessionCaution />
      <ReviewHeader detail={detail} durationS={durationS} search={search} meId={me?.id} />
      <ReviewToolbar
        mayWork={mayWork}
        mine={mine}
        claimable={claimable}
        busy={act.busy}
        hasPrevious={prev !== undefined}
        hasNext={next !== undefined}
        view={tv.view}
        phase={tv.phase}
        onClaim={act.claim}
        onRelease={act.release}
        onDismiss={submitDismiss}
        onEscalate={() => act.escalation.setOpen(true)}
        onPrevious={() => go(prev?.id)}
        onNext={() => go(next?.id)}
        onHelp={() => setHelp(true)}
      />
      <div className="grid gap-3 xl:grid-cols-[minmax(0,1fr)_24rem]">
        {/* The app shell's <main> holds the whole screen: one main landmark per page. */}
        <section className="flex min-w-0 flex-col gap-1.5" aria-label="Waveforms">
          <FilterBar
            view={traceView}
            onView={setTraceView}
            filter={filter}
            onFilter={applyFilter}
            gain={gain}
            onGain={(step) => setGain((g) => stepGain(g, step))}
            normalise={normalise}
            onNormalise={setNormalise}
          />
          {sp !== null ? (
            <p className="text-sm" data-testid="s-minus-p">
              <strong>S–P {sp.toFixed(2)} s</strong> <span className="text-ink-muted">· about {distanceFromSMinusP(sp).toFixed(0)} km from this station (≈ 8 km per second of S–P, a crustal rule of thumb, not a location)</span>
            </p>
          ) : null}
          {traces.data ? (
            <TracePanel
              traces={traces.data}
              windowStartMs={windowStartMs}
              picks={picks}
              activePhase={tv.phase}
              onZoom={tv.onZoom}
              onPick={tv.onPick}
              onCursor={tv.onCursor}
              syncKey={`item-${detail.id}`}
              segments={segments}
              view={traceView}
              gain={gain}
              normalise={normalise}
              below={
                sgTraces?.spectrogram ? (
                  <section aria-label="Spectrogram" className="flex flex-col gap-0.5" data-stream-id={sgTraces.streamId}>
                    <div className="flex flex-wrap items-center gap-2 text-sm">
                      <h2 className="font-semibold">Spectrogram</h2>
                      <div role="radiogroup" aria-label="Spectrogram component (key G)" className="flex gap-1">
                        {orderedTraces.map((c, i) => (
                          <button
                            key={c.streamId}
                            type="button"
                            role="radio"
                            aria-checked={c.streamId === sgTraces.streamId}
                            onClick={() => setSgIndex(i)}
                            className={`h-6 min-w-6 rounded-xs px-1.5 font-mono text-xs ${c.streamId === sgTraces.streamId ? 'bg-raised font-semibold text-ink underline underline-offset-4' : 'text-ink-muted hover:bg-raised'}`}
                          >
                            {c.streamId.slice(-1)}
                          </button>
                        ))}
                      </div>
                      <span className="font-mono text-xs text-ink-muted">{sgTraces.streamId} · engine pre-processed trace · key G</span>
                    </div>
                    <SpectrogramPanel sg={sgTraces.spectrogram} streamId={sgTraces.streamId} units={sgTraces.units} times={sgTraces.times} syncKey={`item-${detail.id}`} onZoom={tv.onZoom} />
                  </section>
                ) : null
              }
            />
          ) : traces.isError ? (
            <EmptyState title="Traces could not be loaded">{traces.error.message}</EmptyState>
          ) : (
            <Loading label="Loading traces…" />
          )}
        </section>
        <aside className="flex flex-col gap-3" aria-label="Assessment">
          {draft.restoredDraft && writable ? <DraftBanner draft={draft.restoredDraft} onDiscard={draft.discardDraft} /> : null}
          {returned?.returnComment && (detail.state === 'returned' || detail.state === 'in review') ? <ReturnNote note={{ ...returned, returnComment: returned.returnComment }} /> : null}
          {detail.candidateEvent ? (
            <GroupPanel
              eventId={detail.candidateEvent.id}
              builtEventId={eventIndex.data?.byGroup.get(detail.candidateEvent.id) ?? null}
              stationCount={detail.candidateEvent.stationCount}
              ev={group.data}
              loading={group.isPending}
              error={group.error?.message ?? null}
              currentId={detail.id}
              search={search}
              mayLabel={mayLabelGroup}
              eventType={form.watch('eventType')}
              busy={act.groupBusy}
              onLabel={() => setGroupConfirm(true)}
            />
          ) : null}
          {heldBy !== null ? (
            <section className="rounded-sm border border-line bg-surface p-3 text-sm" data-testid="held-by-event">
              <h2 className="pb-1 text-md font-semibold">Event {heldBy}</h2>
              <p className="text-ink-muted">
                This window is a member of{' '}
                <Link className="underline" to={`${paths.event.href}/${heldBy}`}>
                  event {heldBy}
                </Link>{' '}
                (put together by an analyst: no candidate group joined it), with its location, ML and every station&apos;s traces.
              </p>
            </section>
          ) : null}
          <FlagReasons flag={detail.flag} reasons={detail.reasons} />
          <MatchesPanel data={matches.data} loading={matches.isPending} error={matches.error?.message ?? null} canTake={mayWork} onTake={takeMatchedLabel} />
          <section className="rounded-sm border border-line bg-surface p-3">
            <h2 className="pb-1 text-md font-semibold">Label</h2>
            <LabelForm labelButtonRef={labelButton} form={form} canWrite={writable} viewOnly={me !== undefined && !mayWork} busy={act.busy} onLabel={(v) => void act.label(v)} onDismiss={(v) => void act.dismiss(v)} />
          </section>
          {analysis ? <Metrics analysis={analysis} /> : null}
          {afterFirstPaint && analysis && analysis.channels.length > 0 ? <SpectrumSection analysis={analysis} /> : null}
        </aside>
      </div>
      {group.data ? (
        <GroupLabelDialog
          open={groupConfirm}
          ev={group.data}
          currentId={detail.id}
          currentWritable={writable}
          eventType={form.watch('eventType')}
          busy={act.groupBusy}
          onCancel={() => setGroupConfirm(false)}
          onConfirm={() =>
            void form.handleSubmit(async (v) => {
              setGroupConfirm(false);
              await act.labelWholeGroup(v);
            })()
          }
        />
      ) : null}
      <KeyHelp open={help} onClose={() => setHelp(false)} title="Review keys" bindings={reviewKeysHelp} />
      <LeaveDialog
        open={leaving}
        itemId={detail.id}
        unsaved={unsaved()}
        onStay={() => {
          setLeaving(false);
          if (blocker.state === 'blocked') blocker.reset();
        }}
        onDiscardAndLeave={() => {
          draft.discardDraft();
          setLeaving(false);
          if (blocker.state === 'blocked') blocker.proceed();
        }}
        onLeave={() => {
          setLeaving(false);
          if (blocker.state === 'blocked') blocker.proceed();
        }}
      />
      <EscalateDialog
        open={act.escalation.open}
        itemId={detail.id}
        reason={act.escalation.reason}
        onReason={act.escalation.setReason}
        onCancel={() => act.escalation.setOpen(false)}
        onEscalate={() => void act.escalation.escalate()}
      />
    </div>
  );
}
