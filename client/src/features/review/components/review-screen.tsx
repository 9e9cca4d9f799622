import { useCallback, useEffect, useMemo, useRef, useState } from 'react';
import { Link, useLocation, useNavigate } from 'react-router';
import { can } from '@shared/auth/policies';
import { roleSchema, type Role } from '@shared/auth/roles';
import { commonEventTypes, noiseReasons, quakemlEventTypes, type Pick } from '@shared/schemas/label';
import { useCandidateEvent, useLabelGroup, useReviewNote, type CandidateEvent } from '@client/api/queue/candidate-events';
import { Button } from '@client/components/ui/button';
import { Dialog } from '@client/components/ui/dialog';
import { EmptyState } from '@client/components/ui/empty-state';
import { FlagMarker } from '@client/components/ui/flag-marker';
import { Input } from '@client/components/ui/input';
import { Kbd } from '@client/components/ui/kbd';
import { Select } from '@client/components/ui/select';
import { Loading } from '@client/components/ui/skeleton';
import { StateMarker } from '@client/components/ui/state-marker';
import { useToast } from '@client/components/ui/toast';
import { TriageCaution } from '@client/components/ui/triage-caution';
import { paths } from '@client/config/paths';
import { useMe, useQueueList } from '@client/api/queue/get-queue';
import { postKeepAlive, useItemAction, type ItemActionInput } from '@client/api/queue/item-actions';
import { liveArrivals } from '@client/api/queue/live-patch';
import { isTypingTarget, KeyHelp, type KeyBinding } from '@client/components/ui/key-help';
import { EventGroupMembers } from '@client/components/event-group-members';
import { parseFilters } from '@client/api/queue/queue-filters';
import { analysisViewSchema, useItem, useTraces, type AnalysisView } from '@client/features/review/api/get-item';
import { clearDraft, describeUnsaved, readDraft, unsavedWork, writeDraft, type DraftStorage, type ReviewDraft } from '@client/features/review/lib/review-draft';
import { LabelForm, reviewFormDefaults, useReviewForm, type ReviewFormValues } from '@client/features/review/components/label-form';
import { useItemMatches } from '@client/features/review/api/get-matches';
import { MatchesPanel } from './matches-panel';
import { SpectrogramPanel } from './spectrogram-panel';
import { SpectrumPanel } from './spectrum-panel';
import { TracePanel, pickSeconds, type SignalSegments, type TraceCursor } from './trace-panel';

/** The review screen's keys. */
export const reviewKeysHelp: readonly KeyBinding[] = [
  { keys: ['J'], does: 'Next item in the queue' },
  { keys: ['K'], does: 'Previous item in the queue' },
  { keys: ['C'], does: 'Claim this item' },
  { keys: ['R'], does: 'Release your claim' },
  ...commonEventTypes.map((t, i) => ({ keys: [String(i + 1)], does: `Label as ${t} (claims first if needed) and go to the next item` })),
  { keys: ['Enter'], does: 'Label with the form’s values (inside the form)' },
  { keys: ['D'], does: 'Dismiss as noise with the form’s noise reason, then next item' },
  { keys: ['M'], does: 'Take the best match’s label into the form (seen before); confirm with Enter, or D for noise' },
  { keys: ['E'], does: 'Escalate to the supervisors (asks for a reason)' },
  { keys: ['P', 'S'], does: 'Place a P or S pick at the mouse, on the channel under it; also sets the phase a click places. Off the traces, P goes to the vertical’s first trigger and S waits for the mouse' },
  { keys: ['+', '−'], does: 'Zoom in / out around the cursor or the middle' },
  { keys: ['0'], does: 'Show the whole window' },
  { keys: ['Esc'], does: 'Back to the queue (asks first when picks or a note are not saved)' },
  { keys: ['?'], does: 'Show these keys' },
];

/** µs-precision ISO time of `seconds` after `startMs`. */
function isoAt(startMs: number, seconds: number): string {
  const totalUs = Math.round(startMs * 1000 + seconds * 1e6);
  const ms = Math.floor(totalUs / 1000);
  const us = totalUs - ms * 1000;
  return `${new Date(ms).toISOString().slice(0, 23)}${String(us).padStart(3, '0')}Z`;
}

/** The tab's sessionStorage, or null where there is none (drafts are then not kept). */
function draftStorage(): DraftStorage | null {
  try {
    return typeof window !== 'undefined' ? window.sessionStorage : null;
  } catch {
    return null;
  }
}

const fmt = (v: number | null | undefined, digits = 2) => (v === null || v === undefined ? '—' : Math.abs(v) >= 1e5 || (Math.abs(v) < 1e-3 && v !== 0) ? v.toExponential(2) : v.toFixed(digits));

/**
 * The review screen of one queue item: who holds it, the flag and why, the traces of every
 * channel with both bands and STA/LTA (linked cursor and zoom), spectrum with noise models,
 * spectrogram, metrics, picks and the label form — worked from the keyboard (see reviewKeysHelp).
 */
export function ReviewScreen({ itemId }: { itemId: number }) {
  const item = useItem(itemId);
  const matches = useItemMatches(itemId);
  const me = useMe();
  const toast = useToast();
  const navigate = useNavigate();
  const location = useLocation();
  const action = useItemAction();
  const filters = useMemo(() => parseFilters(new URLSearchParams(location.search)), [location.search]);
  const list = useQueueList(filters);
  const [view, setView] = useState<{ from: number; to: number } | null>(null);
  const traces = useTraces(itemId, view?.from ?? null, view?.to ?? null, 1600);
  const [phase, setPhase] = useState<'P' | 'S'>('P');
  const [help, setHelp] = useState(false);
  const [escalating, setEscalating] = useState(false);
  const [reason, setReason] = useState('');
  const [spectrumChannel, setSpectrumChannel] = useState<string | null>(null);
  const [leaving, setLeaving] = useState(false);
  const [groupConfirm, setGroupConfirm] = useState(false);
  const [restoredDraft, setRestoredDraft] = useState<ReviewDraft | null>(null);
  const cursor = useRef<TraceCursor | null>(null);
  const form = useReviewForm();
  const picks = form.watch('picks') ?? [];
  const draftsReady = useRef(false);

  useEffect(() => liveArrivals.seen(itemId), [itemId]);
  const group = useCandidateEvent(item.data?.candidateEvent?.id ?? null);
  const labelGroup = useLabelGroup();
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

  // Unsaved work survives leaving the item: a draft of the form is kept in this tab and put back
  // when the item is opened again while it can still be labelled (lib/review-draft.ts).
  const meId = me?.id;
  useEffect(() => {
    const storage = draftStorage();
    if (draftsReady.current || meId === undefined || !detail || !writable || !storage) return;
    draftsReady.current = true;
    const draft = readDraft(storage, meId, itemId);
    if (!draft || form.formState.isDirty) return;
    form.reset(draft.values, { keepDefaultValues: true });
    setRestoredDraft(draft);
  }, [meId, detail, writable, itemId, form]);
  useEffect(() => {
    const storage = draftStorage();
    if (meId === undefined || !storage) return;
    const sub = form.watch((values) => {
      if (!draftsReady.current) return;
      writeDraft(storage, meId, itemId, values, reviewFormDefaults, new Date().toISOString());
    });
    return () => sub.unsubscribe();
  }, [form, meId, itemId]);
  const dropDraft = useCallback(() => {
    const storage = draftStorage();
    if (storage && meId !== undefined) clearDraft(storage, meId, itemId);
    setRestoredDraft(null);
  }, [meId, itemId]);
  const discardDraft = () => {
    draftsReady.current = false;
    form.reset(reviewFormDefaults);
    dropDraft();
    draftsReady.current = true;
  };

  // Keep a claim alive while this screen is open (the server lets idle claims lapse).
  useEffect(() => {
    if (!mine) return;
    const t = setInterval(() => void postKeepAlive(itemId), 60_000);
    return () => clearInterval(t);
  }, [mine, itemId]);

  const rows = useMemo(() => list.data?.pages.flatMap((p) => p.items) ?? [], [list.data]);
  const idx = rows.findIndex((r) => r.id === itemId);
  const neighbour = (step: 1 | -1) => {
    if (idx < 0) return rows[0]?.id === itemId ? undefined : rows[0];
    for (let i = idx + step; i >= 0 && i < rows.length; i += step) {
      const r = rows[i];
      if (r && (r.state === 'new' || r.state === 'returned' || r.claimedBy?.id === me?.id)) return r;
    }
    return undefined;
  };
  const go = (id: number | undefined) => {
    if (id === undefined) void navigate(`${paths.queue.href}${location.search}`);
    else void navigate(`${paths.queueItem.href}/${id}${location.search}`);
  };

  const run = useCallback(
    async (input: ItemActionInput, okWords: string, advance: boolean) => {
      try {
        const row = await action.mutateAsync(input);
        toast.notify({ tone: 'ok', title: `Item ${row.id} ${okWords}`, durationMs: 2500 });
        if (advance) go(neighbour(1)?.id);
        return row;
      } catch (err) {
        toast.notify({ tone: 'danger', title: `Item ${input.id}: not saved`, body: err instanceof Error ? err.message : String(err) });
        return null;
      }
    },
    // neighbour/go read the latest render's rows.
    // eslint-disable-next-line react-hooks/exhaustive-deps
    [action, toast, rows, idx, me?.id, location.search],
  );

  /** Claims first when the item is waiting, then returns the version to write with. */
  const ensureClaim = useCallback(async (): Promise<number | null> => {
    if (!detail) return null;
    if (mine) return detail.version;
    if (!claimable) {
      toast.notify({ tone: 'warn', title: `Item ${detail.id} is ${detail.state}${detail.claimedBy ? ` (claimed by ${detail.claimedBy.displayName})` : ''}` });
      return null;
    }
    const row = await run({ action: 'claim', id: detail.id, version: detail.version }, 'claimed', false);
    return row ? row.version : null;
  }, [detail, mine, claimable, run, toast]);

  const label = useCallback(
    async (v: ReviewFormValues) => {
      const version = await ensureClaim();
      if (version === null || !detail) return;
      const row = await run({ action: 'label', id: detail.id, version, label: { eventType: v.eventType, certainty: v.certainty, distanceClass: v.distanceClass, picks: v.picks, note: v.note } }, `labelled ${v.eventType}`, true);
      if (row) dropDraft();
    },
    [ensureClaim, run, detail, dropDraft],
  );
  const dismiss = useCallback(
    async (v: ReviewFormValues) => {
      const version = await ensureClaim();
      if (version === null || !detail) return;
      const row = await run({ action: 'dismiss', id: detail.id, version, noiseReason: v.noiseReason, note: v.note }, `dismissed (${v.noiseReason})`, true);
      if (row) dropDraft();
    },
    [ensureClaim, run, detail, dropDraft],
  );
  /** After the confirmation: every member gets the type only, this item (when it can be written) its whole form. */
  const labelWholeGroup = async (v: ReviewFormValues) => {
    const ev = group.data;
    setGroupConfirm(false);
    if (!ev) return;
    try {
      const current = writable ? { itemId: itemId, label: { eventType: v.eventType, certainty: v.certainty, distanceClass: v.distanceClass, picks: v.picks, note: v.note } } : undefined;
      const res = await labelGroup.mutateAsync({ eventId: ev.id, body: { eventType: v.eventType, current } });
      if (res.members.some((m) => m.itemId === itemId && m.result === 'labelled')) dropDraft();
      const done = res.members.filter((m) => m.result === 'labelled').length;
      const skipped = res.members.filter((m) => m.result === 'skipped');
      toast.notify({
        tone: skipped.length > 0 ? 'warn' : 'ok',
        title: `Event group #${ev.id}: ${done} of ${res.members.length} labelled ${v.eventType}`,
        body: skipped.length > 0 ? skipped.map((m) => `item ${m.itemId}: ${m.reason ?? 'skipped'}`).join('; ') : 'Each member can still be corrected on its own.',
      });
    } catch (err) {
      toast.notify({ tone: 'danger', title: `Could not label event group #${ev.id}`, body: err instanceof Error ? err.message : String(err) });
    }
  };
  const escalate = async () => {
    const version = await ensureClaim();
    if (version === null || !detail) return;
    const row = await run({ action: 'escalate', id: detail.id, version, reason }, 'escalated to the supervisors', true);
    if (row) {
      dropDraft();
      setEscalating(false);
      setReason('');
    }
  };

  const leadTraces = traces.data?.channels.find((c) => c.streamId.endsWith('Z')) ?? traces.data?.channels[0];
  const placePick = useCallback(
    (streamId: string, timeS: number, which: 'P' | 'S') => {
      const others = (form.getValues('picks') ?? []).filter((p) => !(p.phase === which && p.streamId === streamId));
      const pick: Pick = { phase: which, time: isoAt(windowStartMs, timeS), onset: 'questionable', polarity: 'undecidable', streamId };
      form.setValue('picks', [...others, pick].sort((a, b) => pickSeconds(a, windowStartMs) - pickSeconds(b, windowStartMs)), { shouldDirty: true });
    },
    [form, windowStartMs],
  );
  const onPick = useCallback((streamId: string, t: number) => placePick(streamId, t, phase), [placePick, phase]);
  const onZoom = useCallback((from: number, to: number) => setView({ from, to }), []);
  const onCursor = useCallback((at: TraceCursor | null) => {
    cursor.current = at;
  }, []);
  /** What leaving now would lose (drives the Esc warning). */
  const unsaved = () => unsavedWork(form.getValues(), reviewFormDefaults);
  /**
   * P or S from the keyboard: at the mouse, on the channel under it. With the mouse off the traces,
   * P goes to the vertical's first STA/LTA trigger (where a P onset usually is) and S is not placed:
   * the trigger says nothing about the S arrival, so a guess there would sit on the P.
   */
  const keyPick = (which: 'P' | 'S') => {
    setPhase(which);
    const at = cursor.current;
    if (at) return placePick(at.streamId, at.timeS, which);
    const firstTrigger = leadTraces?.triggers[0]?.on;
    if (which === 'P' && leadTraces && firstTrigger !== undefined) return placePick(leadTraces.streamId, firstTrigger, 'P');
    toast.notify({
      tone: 'warn',
      title: `Point at a trace to place ${which === 'S' ? 'an S' : 'a P'} pick`,
      body: which === 'S' ? 'S goes where the mouse is, on the channel under it; clicking a trace places one too.' : 'No STA/LTA trigger on the vertical to place P at.',
      durationMs: 4000,
    });
  };

  /**
   * Key M: the best labelled match's label goes into the form (event type, or the noise reason for
   * a match to dismissed noise). Nothing is saved: the analyst confirms with Enter (or D).
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
      toast.notify({ tone: 'info', title: `Label set to ${type}`, body: `From the best match (${s.value.toFixed(2)}). Press Enter to label, or change it first.`, durationMs: 4000 });
    } else {
      const reason = noiseReasons.find((r) => r === s.noiseReason);
      if (!reason) return;
      form.setValue('noiseReason', reason, { shouldDirty: true });
      toast.notify({ tone: 'info', title: `Noise reason set to ${reason}`, body: `From the best match (${s.value.toFixed(2)}). Press D to dismiss.`, durationMs: 4000 });
    }
  };

  const zoom = (factor: number) => {
    const from = view?.from ?? 0;
    const to = view?.to ?? durationS;
    const centre = cursor.current?.timeS ?? (from + to) / 2;
    const half = Math.min(durationS / 2, ((to - from) * factor) / 2);
    if (half * 2 >= durationS - 1e-6) return setView(null);
    const f = Math.max(0, Math.min(durationS - 2 * half, centre - half));
    setView({ from: f, to: f + 2 * half });
  };

  useEffect(() => {
    const onKey = (e: KeyboardEvent) => {
      // Keys belong to an open dialog (Esc there closes it, it must not also leave the item).
      if (e.ctrlKey || e.metaKey || e.altKey || isTypingTarget(e.target) || !detail || document.querySelector('dialog[open]')) return;
      const k = e.key;
      const n = Number(k);
      if (!mayWork && /^[crdepsm1-9]$/.test(k)) {
        toast.notify({ tone: 'info', title: 'View only', body: 'Your role can look at this item but not claim, label, dismiss or escalate it.', durationMs: 3000 });
        e.preventDefault();
        return;
      }
      if (k === 'j') go(neighbour(1)?.id);
      else if (k === 'k') go(neighbour(-1)?.id);
      else if (k === 'c') {
        if (claimable) void run({ action: 'claim', id: detail.id, version: detail.version }, 'claimed', false);
        else toast.notify({ tone: 'warn', title: mine ? 'You already hold this item' : `Item ${detail.id} is ${detail.state}` });
      } else if (k === 'r' && mine) void run({ action: 'release', id: detail.id, version: detail.version }, 'released', false);
      else if (Number.isInteger(n) && n >= 1 && n <= commonEventTypes.length) {
        const type = commonEventTypes[n - 1];
        if (type) {
          form.setValue('eventType', type);
          void form.handleSubmit(label)();
        }
      } else if (k === 'd') void form.handleSubmit(dismiss)();
      else if (k === 'e') setEscalating(true);
      else if (k === 'm') takeMatchedLabel();
      else if (k === 'p' || k === 's') keyPick(k === 'p' ? 'P' : 'S');
      else if (k === '+' || k === '=') zoom(0.5);
      else if (k === '-' || k === '_') zoom(2);
      else if (k === '0') setView(null);
      else if (k === 'Escape') {
        if (unsaved().any) setLeaving(true);
        else go(undefined);
      }
      else if (k === '?') setHelp(true);
      else return;
      e.preventDefault();
    };
    window.addEventListener('keydown', onKey);
    return () => window.removeEventListener('keydown', onKey);
  });

  if (item.isPending) return <Loading label={`Loading item ${itemId}…`} className="m-6" />;
  if (item.isError || !detail) return <EmptyState title={`Item ${itemId} could not be loaded`} className="m-6">{item.error?.message}</EmptyState>;

  const segments: Record<string, SignalSegments | null> = Object.fromEntries((analysis?.channels ?? []).map((c) => [c.id, c.signalSpectrum ?? null]));
  const specChannel = analysis?.channels.find((c) => c.id === (spectrumChannel ?? analysis.leadChannel)) ?? analysis?.channels[0];
  const next = neighbour(1);
  const prev = neighbour(-1);
  const holder = detail.claimedBy && detail.state === 'in review' ? (detail.claimedBy.id === me?.id ? 'you' : detail.claimedBy.displayName) : null;

  return (
    <div className="flex flex-col gap-3" data-item-id={detail.id} data-version={detail.version}>
      <header className="flex flex-wrap items-center gap-x-4 gap-y-2">
        <Link to={`${paths.queue.href}${location.search}`} className="text-sm">
          ← Queue <Kbd>Esc</Kbd>
        </Link>
        <h1 className="text-xl font-semibold">
          <span className="font-mono">{detail.station}</span> <span className="font-normal text-ink-muted">item {detail.id}</span>
        </h1>
        <span className="font-mono text-sm">
          <time dateTime={detail.windowStart}>{new Date(detail.windowStart).toISOString()}</time> · {durationS.toFixed(1)} s
        </span>
        <StateMarker state={detail.state} />
        <FlagMarker flag={detail.flag} size="md" />
        <span className="font-mono text-sm" title="Orders the queue; not a magnitude">
          score {detail.score.toFixed(1)}
        </span>
        <span className="text-sm" data-testid="claim-holder">
          {holder ? (
            <>
              Claimed by <strong>{holder}</strong>
            </>
          ) : detail.state === 'new' || detail.state === 'returned' ? (
            'Not claimed'
          ) : (
            <>by {detail.updatedBy?.displayName ?? 'the system'}</>
          )}
        </span>
      </header>
      <div className="flex flex-wrap items-center gap-2" role="toolbar" aria-label="Item actions">
        {mayWork ? (
          <>
            <Button size="sm" variant={claimable ? 'primary' : 'secondary'} shortcut="C" disabled={!claimable || action.isPending} onClick={() => void run({ action: 'claim', id: detail.id, version: detail.version }, 'claimed', false)}>
              Claim
            </Button>
            <Button size="sm" shortcut="R" disabled={!mine || action.isPending} onClick={() => void run({ action: 'release', id: detail.id, version: detail.version }, 'released', false)}>
              Release
            </Button>
            <Button size="sm" shortcut="D" disabled={(!mine && !claimable) || action.isPending} onClick={() => void form.handleSubmit(dismiss)()}>
              Dismiss
            </Button>
            <Button size="sm" shortcut="E" disabled={(!mine && !claimable) || action.isPending} onClick={() => setEscalating(true)}>
              Escalate
            </Button>
          </>
        ) : (
          <span className="text-sm text-ink-muted" data-testid="view-only">
            View only: your role does not work the queue.
          </span>
        )}
        <span className="mx-2 h-5 border-l border-line" aria-hidden="true" />
        <Button size="sm" variant="quiet" shortcut="K" disabled={!prev} onClick={() => go(prev?.id)}>
          Previous
        </Button>
        <Button size="sm" variant="quiet" shortcut="J" disabled={!next} onClick={() => go(next?.id)}>
          Next
        </Button>
        <Button size="sm" variant="quiet" shortcut="?" onClick={() => setHelp(true)}>
          Keys
        </Button>
        <span className="ml-auto text-sm text-ink-muted">
          Zoom {view ? `${view.from.toFixed(2)}–${view.to.toFixed(2)} s` : 'whole window'} (<Kbd>+</Kbd> <Kbd>−</Kbd> <Kbd>0</Kbd>) · click places <strong className="text-ink">{phase}</strong>
        </span>
      </div>
      <div className="grid gap-4 xl:grid-cols-[minmax(0,1fr)_26rem]">
        {/* The app shell's <main> holds the whole screen: one main landmark per page. */}
        <section className="flex min-w-0 flex-col gap-3" aria-label="Waveforms">
          {traces.data ? (
            <TracePanel
              traces={traces.data}
              windowStartMs={windowStartMs}
              picks={picks}
              activePhase={phase}
              onZoom={onZoom}
              onPick={onPick}
              onCursor={onCursor}
              syncKey={`item-${detail.id}`}
              segments={segments}
              afterLead={
                leadTraces?.spectrogram ? (
                  <section aria-label="Spectrogram" className="rounded-sm border border-line bg-surface p-2">
                    <h2 className="pb-1 text-md font-semibold">Spectrogram · {leadTraces.streamId}</h2>
                    <SpectrogramPanel sg={leadTraces.spectrogram} streamId={leadTraces.streamId} units={leadTraces.units} times={leadTraces.times} syncKey={`item-${detail.id}`} onZoom={onZoom} />
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
          {restoredDraft && writable ? (
            <section aria-label="Unsaved draft" className="flex flex-wrap items-center gap-2 rounded-sm border-[1.5px] border-warn bg-surface p-3 text-sm" data-testid="draft-restored" role="status">
              <p className="min-w-0 flex-1">
                <strong>Draft put back:</strong> {describeUnsaved(unsavedWork(restoredDraft.values, reviewFormDefaults))} not yet saved, kept in this tab since{' '}
                <time className="font-mono" dateTime={restoredDraft.savedAt}>{restoredDraft.savedAt.slice(11, 19)}Z</time>.
              </p>
              <Button size="sm" variant="quiet" onClick={discardDraft}>
                Discard draft
              </Button>
            </section>
          ) : null}
          {note.data?.note?.returnComment && (detail.state === 'returned' || detail.state === 'in review') ? (
            <section aria-label="Returned by a supervisor" className="rounded-sm border-[1.5px] p-3" style={{ borderColor: 'var(--sf-state-returned)' }} data-testid="return-note">
              <h2 className="pb-1 text-md font-semibold">Returned to the queue</h2>
              <p className="text-sm text-ink-muted">
                by {note.data.note.returnedBy ?? 'a supervisor'}
                {note.data.note.returnedAt ? (
                  <>
                    {' '}
                    at <time className="font-mono" dateTime={note.data.note.returnedAt}>{new Date(note.data.note.returnedAt).toISOString()}</time>
                  </>
                ) : null}
              </p>
              <blockquote className="mt-1 border-l-2 border-line-strong pl-2 text-base whitespace-pre-wrap">{note.data.note.returnComment}</blockquote>
            </section>
          ) : null}
          {detail.candidateEvent ? (
            <GroupPanel
              eventId={detail.candidateEvent.id}
              stationCount={detail.candidateEvent.stationCount}
              ev={group.data}
              loading={group.isPending}
              error={group.error?.message ?? null}
              currentId={detail.id}
              search={location.search}
              mayLabel={mayLabelGroup}
              eventType={form.watch('eventType')}
              busy={labelGroup.isPending}
              onLabel={() => setGroupConfirm(true)}
            />
          ) : null}
          <section className="rounded-sm border border-line bg-surface p-3">
            <h2 className="pb-1 text-md font-semibold">Why it is flagged {detail.flag}</h2>
            <ul className="list-disc pl-5 text-sm">
              {detail.reasons.map((r) => (
                <li key={r}>{r}</li>
              ))}
            </ul>
            <TriageCaution className="mt-2" />
          </section>
          <MatchesPanel data={matches.data} loading={matches.isPending} error={matches.error?.message ?? null} canTake={mayWork} onTake={takeMatchedLabel} />
          <section className="rounded-sm border border-line bg-surface p-3">
            <h2 className="pb-1 text-md font-semibold">Label</h2>
            <LabelForm form={form} canWrite={writable} viewOnly={me !== undefined && !mayWork} busy={action.isPending} onLabel={(v) => void label(v)} onDismiss={(v) => void dismiss(v)} />
          </section>
          {analysis ? <Metrics analysis={analysis} /> : null}
          {specChannel ? (
            <section className="rounded-sm border border-line bg-surface p-3">
              <div className="flex items-center justify-between gap-2 pb-1">
                <h2 className="text-md font-semibold">Spectrum</h2>
                <label className="flex items-center gap-2 text-sm">
                  Channel
                  <Select className="h-7" value={specChannel.id} onChange={(e) => setSpectrumChannel(e.target.value)}>
                    {analysis?.channels.map((c) => (
                      <option key={c.id}>{c.id}</option>
                    ))}
                  </Select>
                </label>
              </div>
              <SpectrumPanel channel={specChannel} />
            </section>
          ) : null}
        </aside>
      </div>
      {group.data ? (
        <GroupLabelDialog
          open={groupConfirm}
          ev={group.data}
          currentId={detail.id}
          currentWritable={writable}
          eventType={form.watch('eventType')}
          busy={labelGroup.isPending}
          onCancel={() => setGroupConfirm(false)}
          onConfirm={() => void form.handleSubmit(labelWholeGroup)()}
        />
      ) : null}
      <KeyHelp open={help} onClose={() => setHelp(false)} title="Review keys" bindings={reviewKeysHelp} />
      <Dialog
        open={leaving}
        onClose={() => setLeaving(false)}
        title={`Leave item ${detail.id} without saving?`}
        description={`${describeUnsaved(unsaved())} on this item ${unsaved().picks + (unsaved().note ? 1 : 0) > 1 ? 'are' : 'is'} not saved. A draft stays in this tab and comes back when you open the item again.`}
        actions={
          <>
            <Button onClick={() => setLeaving(false)}>Stay</Button>
            <Button
              variant="danger"
              onClick={() => {
                discardDraft();
                setLeaving(false);
                go(undefined);
              }}
            >
              Discard and leave
            </Button>
            <Button
              variant="primary"
              onClick={() => {
                setLeaving(false);
                go(undefined);
              }}
            >
              Leave, keep draft
            </Button>
          </>
        }
      />
      <Dialog
        open={escalating}
        onClose={() => setEscalating(false)}
        title={`Escalate item ${detail.id}`}
        description="Supervisors get it in their inbox. Say what they should look at."
        actions={
          <>
            <Button onClick={() => setEscalating(false)}>Cancel</Button>
            <Button variant="primary" shortcut="Enter" disabled={reason.trim().length < 3} onClick={() => void escalate()}>
              Escalate
            </Button>
          </>
        }
      >
        <form
          onSubmit={(e) => {
            e.preventDefault();
            if (reason.trim().length >= 3) void escalate();
          }}
        >
          <label className="flex flex-col gap-1 text-sm font-medium">
            Reason
            <Input value={reason} onChange={(e) => setReason(e.target.value)} placeholder="e.g. felt nearby? similar arrivals at KV02 and KV03" />
          </label>
        </form>
      </Dialog>
    </div>
  );
}

/** Metrics per channel from the engine's analysis. */
function Metrics({ analysis }: { analysis: AnalysisView }) {
  return (
    <section className="rounded-sm border border-line bg-surface p-3">
      <h2 className="pb-1 text-md font-semibold">Metrics</h2>
      <div className="overflow-x-auto">
        <table className="w-full text-sm">
          <caption className="sr-only">Per-channel metrics: band ratio, STA/LTA peak, SNR, dominant frequency and centroid</caption>
          <thead>
            <tr className="text-left text-ink-muted">
              <th scope="col" className="pr-2 font-medium">Channel</th>
              <th scope="col" className="pr-2 text-right font-medium" title="E_high / E_low">high/low</th>
              <th scope="col" className="pr-2 text-right font-medium">log10</th>
              <th scope="col" className="pr-2 text-right font-medium">STA/LTA peak</th>
              <th scope="col" className="pr-2 text-right font-medium">SNR</th>
              <th scope="col" className="pr-2 text-right font-medium">f dom (Hz)</th>
              <th scope="col" className="text-right font-medium">centroid (Hz)</th>
            </tr>
          </thead>
          <tbody className="font-mono">
            {analysis.channels.map((c) => (
              <tr key={c.id} className="border-t border-line">
                <th scope="row" className="pr-2 text-left font-normal">
                  {c.id.split('.').pop()}
                  {c.id === analysis.leadChannel ? <span className="ml-1 font-sans text-xs text-ink-muted">(lead)</span> : null}
                </th>
                <td className="pr-2 text-right">{fmt(c.ratio)}</td>
                <td className="pr-2 text-right">{fmt(c.log10Ratio)}</td>
                <td className="pr-2 text-right">
                  {fmt(c.staLta.peak)} <span className="text-ink-muted">@{c.staLta.peakTime.toFixed(1)} s</span>
                </td>
                <td className="pr-2 text-right">{fmt(c.snr, 1)}</td>
                <td className="pr-2 text-right">{fmt(c.dominantFrequency)}</td>
                <td className="text-right">{fmt(c.spectralCentroid)}</td>
              </tr>
            ))}
          </tbody>
        </table>
      </div>
      {analysis.channels.some((c) => c.qc.length > 0 || c.warnings.length > 0) ? (
        <ul className="mt-2 list-disc pl-5 text-sm">
          {analysis.channels.flatMap((c) => [...c.qc.map((q) => `${c.id}: ${q.severity}: ${q.message}`), ...c.warnings.map((w) => `${c.id}: ${w}`)]).map((m) => (
            <li key={m}>{m}</li>
          ))}
        </ul>
      ) : null}
      <SignalSpectrumTable analysis={analysis} />
      <p className="mt-1 text-xs text-ink-muted">
        Baseline: {analysis.baseline ?? '—'}. Band energies from causal filtering from zero state.
      </p>
    </section>
  );
}

/** 10·log10 of a power ratio, dB (a PSD ratio is a power ratio; common practice). */
const powerDb = (r: number | null) => (r === null || r <= 0 ? '—' : (10 * Math.log10(r)).toFixed(1));

/**
 * The engine's signal spectrum per channel: where the triggered part rises most above the
 * pre-trigger noise (peak frequency, that ratio in dB, the centroid of the excess) and the two
 * segments it compared (shaded on the Z trace).
 */
function SignalSpectrumTable({ analysis }: { analysis: AnalysisView }) {
  const rows = analysis.channels.filter((c) => c.signalSpectrum !== undefined || c.signalSpectrumNote);
  if (rows.length === 0) return null;
  return (
    <div className="mt-3" data-testid="signal-spectrum">
      <h3 className="pb-1 text-sm font-semibold">Signal over pre-trigger noise</h3>
      <table className="w-full text-sm">
        <caption className="sr-only">Per channel: peak frequency of the signal-to-noise spectral ratio, that ratio in dB, centroid of the excess, and the segments used</caption>
        <thead>
          <tr className="text-left text-ink-muted">
            <th scope="col" className="pr-2 font-medium">Channel</th>
            <th scope="col" className="pr-2 text-right font-medium">peak (Hz)</th>
            <th scope="col" className="pr-2 text-right font-medium" title="10·log10 of signal PSD ÷ noise PSD at the peak">SNR (dB)</th>
            <th scope="col" className="pr-2 text-right font-medium">centroid (Hz)</th>
            <th scope="col" className="text-right font-medium">noise · signal (s)</th>
          </tr>
        </thead>
        <tbody className="font-mono tabular-nums">
          {rows.map((c) => {
            const sp = c.signalSpectrum ?? null;
            return (
              <tr key={c.id} className="border-t border-line">
                <th scope="row" className="pr-2 text-left font-normal">{c.id.split('.').pop()}</th>
                {sp ? (
                  <>
                    <td className="pr-2 text-right">{fmt(sp.peakFrequency)}</td>
                    <td className="pr-2 text-right">{powerDb(sp.peakSnr)}</td>
                    <td className="pr-2 text-right">{fmt(sp.centroid)}</td>
                    <td className="text-right whitespace-nowrap">
                      {sp.noiseFromS.toFixed(1)}–{sp.noiseToS.toFixed(1)} · {sp.fromS.toFixed(1)}–{sp.toS.toFixed(1)}
                    </td>
                  </>
                ) : (
                  <td colSpan={4} className="font-sans text-ink-muted">
                    {c.signalSpectrumNote ?? 'no trigger: whole-window spectrum used'}
                  </td>
                )}
              </tr>
            );
          })}
        </tbody>
      </table>
      <p className="mt-1 text-xs text-ink-muted">Welch PSD of the triggered part ÷ the same over the noise before it; a peak is counted only where the ratio clears the profile’s minimum.</p>
    </div>
  );
}

/** Props of <GroupPanel>. */
type GroupPanelProps = {
  eventId: number;
  stationCount: number;
  ev: CandidateEvent | undefined;
  loading: boolean;
  error: string | null;
  currentId: number;
  search: string;
  mayLabel: boolean;
  eventType: string;
  busy: boolean;
  onLabel: () => void;
};

/**
 * The candidate event this item belongs to (issue 7): every member with station, first trigger,
 * flag and state, each a link to its own review; "Label the whole group" for those the policy
 * lets label (queue.label), which asks first (GroupLabelDialog).
 */
function GroupPanel({ eventId, stationCount, ev, loading, error, currentId, search, mayLabel, eventType, busy, onLabel }: GroupPanelProps) {
  return (
    <section aria-labelledby={`group-${eventId}`} className="rounded-sm border border-line bg-surface p-3" data-testid="group-panel">
      <h2 id={`group-${eventId}`} className="pb-1 text-md font-semibold">
        Event group #{eventId} · {stationCount} stations
      </h2>
      <p className="pb-2 text-sm text-ink-muted">First triggers at {stationCount} stations close enough in time for one source. Not located; no magnitude.</p>
      {loading ? (
        <Loading label="Loading the group…" />
      ) : error || !ev ? (
        <p className="text-sm">The group could not be loaded{error ? `: ${error}` : ''}.</p>
      ) : (
        <EventGroupMembers eventId={eventId} members={ev.members} currentId={currentId} search={search} layout="narrow" />
      )}
      {mayLabel && ev ? (
        <div className="mt-2 flex flex-wrap items-center gap-2">
          <Button size="sm" disabled={busy} onClick={onLabel}>
            Label the whole group as {eventType}
          </Button>
          <span className="text-xs text-ink-muted">Asks first. The others get the type only; this item gets your whole form.</span>
        </div>
      ) : null}
    </section>
  );
}

/** Props of <GroupLabelDialog>. */
type GroupLabelDialogProps = {
  open: boolean;
  ev: CandidateEvent;
  currentId: number;
  /** Whether this item can take the form's label (waiting, or claimed by the viewer). */
  currentWritable: boolean;
  eventType: string;
  busy: boolean;
  onCancel: () => void;
  onConfirm: () => void;
};

/**
 * The confirmation before labelling a whole event group: which members get the type, which are
 * already settled (skipped), and that only the type is copied — certainty "suspected", no picks,
 * no note — since nobody has looked at the other members' traces; this item gets the whole form.
 */
function GroupLabelDialog({ open, ev, currentId, currentWritable, eventType, busy, onCancel, onConfirm }: GroupLabelDialogProps) {
  const waiting = ev.members.filter((m) => m.state === 'new' || m.state === 'returned' || m.state === 'in review');
  const settled = ev.members.filter((m) => !waiting.includes(m));
  const others = waiting.filter((m) => m.itemId !== currentId);
  return (
    <Dialog
      open={open}
      onClose={onCancel}
      title={`Label event group #${ev.id} as ${eventType}?`}
      description="Only the event type is copied to the other members: they keep certainty “suspected”, get no picks and no note of yours."
      actions={
        <>
          <Button onClick={onCancel}>Cancel</Button>
          <Button variant="primary" disabled={busy || waiting.length === 0} onClick={onConfirm}>
            Label {waiting.length} {waiting.length === 1 ? 'item' : 'items'} as {eventType}
          </Button>
        </>
      }
    >
      <ul className="flex flex-col gap-1 text-sm" data-testid="group-label-plan">
        {waiting.map((m) => (
          <li key={m.itemId}>
            <span className="font-mono">{m.station}</span> item {m.itemId}:{' '}
            {m.itemId === currentId && currentWritable ? <strong>this item, with your whole form (picks, certainty, note)</strong> : m.state === 'in review' ? 'the type only, if the claim is yours' : 'the type only'}
          </li>
        ))}
        {settled.map((m) => (
          <li key={m.itemId} className="text-ink-muted">
            <span className="font-mono">{m.station}</span> item {m.itemId}: skipped, already {m.state}
          </li>
        ))}
      </ul>
      {others.length > 0 ? <p className="mt-2 text-sm text-ink-muted">Open each member later to place its picks; every label stays correctable on its own.</p> : null}
    </Dialog>
  );
}
