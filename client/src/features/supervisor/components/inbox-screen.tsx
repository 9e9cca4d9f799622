import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { useState, type ReactNode } from 'react';
import { Badge } from '@client/components/ui/badge';
import { Button } from '@client/components/ui/button';
import { EmptyState } from '@client/components/ui/empty-state';
import { Loading } from '@client/components/ui/skeleton';
import { ScrollTable, Td, Th, Tr } from '@client/components/ui/table';
import { TriageCaution } from '@client/components/ui/triage-caution';
import { commonEventTypes, quakemlEventTypes, typeCertainties } from '@shared/schemas/label';
import { Select } from '@client/components/ui/select';
import { inboxAction, inboxQuery, type ConfirmLabelInput, type InboxEntry } from '@client/features/supervisor/api/supervisor-api';
import { useSupervisorLive } from '@client/features/supervisor/hooks/use-supervisor-live';
import { ErrorLine, SupervisorPage } from './common';

/**
 * /inbox: escalations sent to this supervisor, newest first, updating live. Acknowledge ("I am on
 * it"), then confirm the item or return it to the queue with a comment the analyst sees. An
 * escalated item has no event label (the analyst escalated instead of labelling), so "Confirm…"
 * asks for its event type first: a confirmed item without one would reach neither the catalogue
 * nor the queue.
 */
export function InboxScreen() {
  const live = useSupervisorLive();
  const qc = useQueryClient();
  const inbox = useQuery(inboxQuery());
  const [returning, setReturning] = useState<number | null>(null);
  const [confirming, setConfirming] = useState<number | null>(null);
  const [comment, setComment] = useState('');
  const act = useMutation({
    mutationFn: (v: { id: number; action: 'read' | 'acknowledge' | 'confirm' | 'return'; comment?: string; label?: ConfirmLabelInput }) => inboxAction(v.id, v.action, { comment: v.comment, label: v.label }),
    onSuccess: (data) => {
      qc.setQueryData(inboxQuery().queryKey, data);
      setReturning(null);
      setConfirming(null);
      setComment('');
    },
  });
  const unread = inbox.data?.unread ?? 0;
  return (
    <SupervisorPage
      title="Inbox"
      summary={
        <span>
          Escalations from the duty analysts. <span aria-live="polite" data-testid="unread-count">{unread === 0 ? 'Nothing unread' : `${unread} unread`}</span>
        </span>
      }
      live={live}
    >
      <TriageCaution variant="line" />
      <ErrorLine error={inbox.error ?? act.error} />
      {inbox.isPending ? (
        <Loading label="Loading the inbox…" />
      ) : (inbox.data?.entries.length ?? 0) === 0 ? (
        <EmptyState title="No escalations">When an analyst escalates an item it appears here at once, and you get an e-mail.</EmptyState>
      ) : (
        <ScrollTable
          label="Escalations" caption="Escalations, newest first"
          head={
            <tr>
              <Th>Received</Th>
              <Th>Item</Th>
              <Th>Reason</Th>
              <Th>Status</Th>
              <Th>Actions</Th>
            </tr>
          }
        >
          {inbox.data?.entries.map((e) => (
            <Tr key={e.id} data-testid={`inbox-entry-${e.id}`} className={e.readAt ? undefined : 'font-semibold'}>
              <Td className="font-mono text-sm whitespace-nowrap">{e.createdAt}</Td>
              <Td>
                <a className="underline" href={`/queue/items/${e.itemId}`} onClick={() => !e.readAt && act.mutate({ id: e.id, action: 'read' })}>
                  <SubjectText subject={e.subject} />
                </a>
                <div className="text-sm text-ink-muted">escalated by {e.escalatedBy ?? 'someone'}</div>
              </Td>
              <Td className="max-w-[28rem] text-sm">{e.reason}</Td>
              <Td>
                <EntryStatus entry={e} />
              </Td>
              <Td>
                {e.resolution ? null : confirming === e.id ? (
                  <ConfirmLabelForm entryId={e.id} busy={act.isPending} onCancel={() => setConfirming(null)} onConfirm={(label) => act.mutate({ id: e.id, action: 'confirm', label })} />
                ) : returning === e.id ? (
                  <form
                    className="flex flex-col gap-1"
                    onSubmit={(ev) => {
                      ev.preventDefault();
                      act.mutate({ id: e.id, action: 'return', comment });
                    }}
                  >
                    <label className="text-sm" htmlFor={`ret-${e.id}`}>
                      Comment for the analyst
                    </label>
                    <textarea id={`ret-${e.id}`} className="rounded-xs border border-line bg-surface p-1 text-sm" rows={2} value={comment} onChange={(ev) => setComment(ev.target.value)} />
                    <div className="flex gap-2">
                      <Button size="sm" type="submit" variant="primary" disabled={comment.trim().length < 3}>
                        Return to queue
                      </Button>
                      <Button size="sm" variant="quiet" onClick={() => setReturning(null)}>
                        Cancel
                      </Button>
                    </div>
                  </form>
                ) : (
                  <div className="flex flex-wrap gap-2">
                    {!e.acknowledgedAt ? (
                      <Button size="sm" onClick={() => act.mutate({ id: e.id, action: 'acknowledge' })}>
                        Acknowledge
                      </Button>
                    ) : null}
                    {e.itemLabelType === null ? (
                      <Button size="sm" variant="primary" onClick={() => setConfirming(e.id)}>
                        Confirm…
                      </Button>
                    ) : (
                      <Button size="sm" variant="primary" onClick={() => act.mutate({ id: e.id, action: 'confirm' })}>
                        Confirm as {e.itemLabelType}
                      </Button>
                    )}
                    <Button size="sm" variant="secondary" onClick={() => setReturning(e.id)}>
                      Return…
                    </Button>
                  </div>
                )}
              </Td>
            </Tr>
          ))}
        </ScrollTable>
      )}
    </SupervisorPage>
  );
}

/** ISO 8601 times inside a subject line ("… 2026-03-14T09:26:00.000Z …"). */
const isoTimeInText = /\d{4}-\d{2}-\d{2}T\d{2}:\d{2}(?::\d{2}(?:\.\d+)?)?Z/g;

/**
 * A subject with each ISO time kept on one line in Plex Mono (a time broken after its "T" or at
 * a colon reads as two values).
 */
function SubjectText({ subject }: { subject: string }) {
  const parts: ReactNode[] = [];
  let last = 0;
  for (const m of subject.matchAll(isoTimeInText)) {
    const at = m.index;
    if (at > last) parts.push(subject.slice(last, at));
    parts.push(
      <span key={at} className="font-mono text-sm whitespace-nowrap">
        {m[0]}
      </span>,
    );
    last = at + m[0].length;
  }
  if (last < subject.length) parts.push(subject.slice(last));
  return <>{parts}</>;
}

function EntryStatus({ entry: e }: { entry: InboxEntry }) {
  if (e.resolution) {
    return (
      <span className="text-sm">
        <Badge tone={e.resolution === 'confirmed' ? 'ok' : 'warn'}>{e.resolution === 'confirmed' ? '✓ confirmed' : '↩ returned'}</Badge> by {e.resolvedBy ?? 'a supervisor'}
        {e.resolutionComment ? <span className="block text-ink-muted">“{e.resolutionComment}”</span> : null}
      </span>
    );
  }
  return (
    <span className="flex flex-col gap-1 text-sm">
      {e.readAt ? <span>read</span> : <Badge tone="accent">● unread</Badge>}
      {e.acknowledgedAt ? <span>acknowledged</span> : null}
      {e.mailError ? <span className="text-danger">e-mail not sent</span> : null}
    </span>
  );
}

/**
 * The event label asked for when confirming an escalation that has none: the QuakeML type (the
 * common ones first), its certainty and an optional note; the escalation's reason is kept with it.
 */
function ConfirmLabelForm({ entryId, busy, onCancel, onConfirm }: { entryId: number; busy: boolean; onCancel: () => void; onConfirm: (label: ConfirmLabelInput) => void }) {
  const [eventType, setEventType] = useState<(typeof quakemlEventTypes)[number] | ''>('');
  const [certainty, setCertainty] = useState<(typeof typeCertainties)[number]>('suspected');
  const [note, setNote] = useState('');
  return (
    <form
      className="flex flex-col gap-1"
      aria-label={`Confirm escalation ${entryId} with an event label`}
      onSubmit={(ev) => {
        ev.preventDefault();
        if (eventType !== '') onConfirm({ eventType, certainty, note });
      }}
    >
      <p className="text-sm text-ink-muted">It has no event label yet: which event is it?</p>
      <label className="flex flex-col gap-0.5 text-sm">
        Event type (QuakeML)
        <Select className="h-7" value={eventType} required onChange={(ev) => setEventType(quakemlEventTypes.find((t) => t === ev.target.value) ?? '')}>
          <option value="">choose…</option>
          <optgroup label="Common">
            {commonEventTypes.map((t) => (
              <option key={t}>{t}</option>
            ))}
          </optgroup>
          <optgroup label="All QuakeML 1.2 types">
            {quakemlEventTypes
              .filter((t) => !(commonEventTypes as readonly string[]).includes(t))
              .map((t) => (
                <option key={t}>{t}</option>
              ))}
          </optgroup>
        </Select>
      </label>
      <label className="flex flex-col gap-0.5 text-sm">
        Type certainty
        <Select className="h-7" value={certainty} onChange={(ev) => setCertainty(typeCertainties.find((c) => c === ev.target.value) ?? 'suspected')}>
          {typeCertainties.map((c) => (
            <option key={c}>{c}</option>
          ))}
        </Select>
      </label>
      <label className="flex flex-col gap-0.5 text-sm">
        Note (optional)
        <textarea className="rounded-xs border border-line bg-surface p-1 text-sm" rows={2} value={note} onChange={(ev) => setNote(ev.target.value)} />
      </label>
      <div className="flex gap-2">
        <Button size="sm" type="submit" variant="primary" disabled={eventType === '' || busy}>
          {eventType === '' ? 'Confirm' : `Confirm as ${eventType}`}
        </Button>
        <Button size="sm" variant="quiet" onClick={onCancel}>
          Cancel
        </Button>
      </div>
    </form>
  );
}
