import { useCallback, useEffect, useMemo, useRef, useState } from 'react';
import { can } from '@shared/auth/policies';
import { roleSchema, type Role } from '@shared/auth/roles';
import { noiseReasons, quakemlEventTypes } from '@shared/schemas/label';
import { useCandidateEvent, useReviewNote } from '@client/api/queue/candidate-events';
import { useMe } from '@client/api/queue/get-queue';
import { postKeepAlive } from '@client/api/queue/item-actions';
import { liveArrivals } from '@client/api/queue/live-patch';
import { EmptyState } from '@client/components/ui/empty-state';
import { KeyHelp } from '@client/components/ui/key-help';
import { Loading } from '@client/components/ui/skeleton';
import { useToast } from '@client/components/ui/toast';
import { analysisViewSchema, useItem, useTraces } from '@client/features/review/api/get-item';
import { useItemMatches } from '@client/features/review/api/get-matches';
import { usePrefetchQueueItem } from '@client/features/queue/hooks/use-prefetch-item';
import { useQueueNeighbours } from '@client/features/review/hooks/use-queue-neighbours';
import { useReviewActions } from '@client/features/review/hooks/use-review-actions';
import { useReviewDraft } from '@client/features/review/hooks/use-review-draft';
import { useReviewKeys } from '@client/features/review/hooks/use-review-keys';
import { useTraceView } from '@client/features/review/hooks/use-trace-view';
import { unsavedWork } from '@client/features/review/lib/review-draft';
import { DraftBanner, FlagReasons, ReturnNote, SpectrumSection } from './assessment-notes';
import { GroupLabelDialog, GroupPanel } from './event-group-panel';
import { LabelForm, reviewFormDefaults, useReviewForm } from './label-form';
import { MatchesPanel } from './matches-panel';
import { Metrics } from './metrics-panel';
import { EscalateDialog, LeaveDialog } from './review-dialogs';
import { ReviewHeader, ReviewToolbar } from './review-header';
import { reviewKeysHelp } from './review-keys';
import { SpectrogramPanel } from './spectrogram-panel';
import { TracePanel, type SignalSegments } from './trace-panel';

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

  const detail = item.data;
  const analysis = useMemo(() => {
    const r = analysisViewSchema.safeParse(detail?.analysis);
    return r.success ? r.data : null;
  }, [detail?.analysis]);
  const windowStartMs = detail ? Date.parse(detail.windowStart) : 0;
  const durationS = detail ? (Date.parse(detail.windowEnd) - windowStartMs) / 1000 : 0;
  const mine = detail?.state === 'in review' && detail.claimedBy?.id === me?.id;
  const claimable = mayWork && (detail?.state === 'new' || detail?.state === 'returned');
  const writable = mine || claimable;

  const draft = useReviewDraft(form, me?.id, itemId, detail !== undefined && writable);
  const advance = useCallback(() => go(neighbour(1)?.id), [go, neighbour]);
  const act = useReviewActions({ detail, mine, claimable, writable, group: group.data }, advance, draft.dropDraft);
  const tv = useTraceView(form, windowStartMs, durationS);
  const traces = useTraces(itemId, tv.view?.from ?? null, tv.view?.to ?? null, 1600);
  usePrefetchQueueItem(neighbour(1)?.id);
  const leadTraces = traces.data?.channels.find((c) => c.streamId.endsWith('Z')) ?? traces.data?.channels[0];

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
    escalate: () => act.escalation.setOpen(true),
    takeMatchedLabel,
    pick: (phase) => tv.keyPick(phase, leadTraces),
    zoom: tv.zoom,
    resetZoom: tv.resetZoom,
    leave: () => (unsaved().any ? setLeaving(true) : go(undefined)),
    help: () => setHelp(true),
  });

  if (item.isPending) return <Loading label={`Loading item ${itemId}…`} className="m-6" />;
  if (item.isError || !detail) return <EmptyState title={`Item ${itemId} could not be loaded`} className="m-6">{item.error?.message}</EmptyState>;

  const segments: Record<string, SignalSegments | null> = Object.fromEntries((analysis?.channels ?? []).map((c) => [c.id, c.signalSpectrum ?? null]));
  const next = neighbour(1);
  const prev = neighbour(-1);
  const returned = note.data?.note;

  return (
    <div className="flex flex-col gap-3" data-item-id={detail.id} data-version={detail.version}>
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
      <div className="grid gap-4 xl:grid-cols-[minmax(0,1fr)_26rem]">
        {/* The app shell's <main> holds the whole screen: one main landmark per page. */}
        <section className="flex min-w-0 flex-col gap-3" aria-label="Waveforms">
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
              afterLead={
                leadTraces?.spectrogram ? (
                  <section aria-label="Spectrogram" className="rounded-sm border border-line bg-surface p-2">
                    <h2 className="pb-1 text-md font-semibold">Spectrogram · {leadTraces.streamId}</h2>
                    <SpectrogramPanel sg={leadTraces.spectrogram} streamId={leadTraces.streamId} units={leadTraces.units} times={leadTraces.times} syncKey={`item-${detail.id}`} onZoom={tv.onZoom} />
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
          <FlagReasons flag={detail.flag} reasons={detail.reasons} />
          <MatchesPanel data={matches.data} loading={matches.isPending} error={matches.error?.message ?? null} canTake={mayWork} onTake={takeMatchedLabel} />
          <section className="rounded-sm border border-line bg-surface p-3">
            <h2 className="pb-1 text-md font-semibold">Label</h2>
            <LabelForm labelButtonRef={labelButton} form={form} canWrite={writable} viewOnly={me !== undefined && !mayWork} busy={act.busy} onLabel={(v) => void act.label(v)} onDismiss={(v) => void act.dismiss(v)} />
          </section>
          {analysis ? <Metrics analysis={analysis} /> : null}
          {analysis && analysis.channels.length > 0 ? <SpectrumSection analysis={analysis} /> : null}
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
        onStay={() => setLeaving(false)}
        onDiscardAndLeave={() => {
          draft.discardDraft();
          setLeaving(false);
          go(undefined);
        }}
        onLeave={() => {
          setLeaving(false);
          go(undefined);
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
