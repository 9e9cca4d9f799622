import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { useState } from 'react';
import { quakemlEventTypes } from '@shared/schemas/label';
import { evaluationStatuses, reviewStatuses, type ReviewRow } from '@shared/schemas/supervisor';
import { Badge } from '@client/components/ui/badge';
import { Button, buttonClass } from '@client/components/ui/button';
import { EmptyState } from '@client/components/ui/empty-state';
import { FlagMarker } from '@client/components/ui/flag-marker';
import { Input } from '@client/components/ui/input';
import { UtcTimeInput } from '@client/components/ui/utc-time-input';
import { Select } from '@client/components/ui/select';
import { Loading } from '@client/components/ui/skeleton';
import { Table, TableScroll, TBody, Td, Th, THead, Tr } from '@client/components/ui/table';
import { TriageCaution } from '@client/components/ui/triage-caution';
import { eventCatalogueQuery } from '@client/features/supervisor/api/event-catalogue-api';
import { exportUrl, returnItem, reviewQuery, setStatus, type ReviewFilters } from '@client/features/supervisor/api/supervisor-api';
import { usePeriod } from '@client/features/supervisor/hooks/use-period';
import { useSupervisorLive } from '@client/features/supervisor/hooks/use-supervisor-live';
import { ErrorLine, periodText, Section, SupervisorPage } from './common';
import { EventCatalogue } from './event-catalogue';
import { queryKeys } from '@client/lib/query-keys';

/**
 * /review: the catalogue of the period, one row per event (origin, ML, quality, type, evaluation
 * status; its windows on demand; the supervisor's review or return to the analysts, in
 * event-catalogue.tsx), then the labelled windows no event holds (single-station events, each
 * reviewed on its own), and the catalogue export.
 */
export function ReviewScreen() {
  const live = useSupervisorLive();
  // Default: the 7 UTC days up to the latest window with items (so the demo, dated 2026-03-14,
  // opens on its events), until the person sets a period of their own.
  const period = usePeriod(7, 'any');
  const periodOk = period.from !== undefined && period.to !== undefined && Date.parse(period.from) < Date.parse(period.to);
  return (
    <SupervisorPage title="Review & catalogue" summary="Events of the period with their origin and ML: review, publish or return them; then export the catalogue." live={live}>
      <TriageCaution variant="line" />
      <form className="flex flex-wrap items-end gap-3" aria-label="Period" onSubmit={(e) => e.preventDefault()}>
        {period.from !== undefined && period.to !== undefined ? (
          <>
            <UtcTimeInput label="From (UTC)" value={period.from} onChange={period.setFrom} error={periodOk ? undefined : 'must be before To'} />
            <UtcTimeInput label="To (UTC, exclusive)" value={period.to} onChange={period.setTo} />
          </>
        ) : null}
      </form>
      {period.defaultPeriod && !period.edited ? (
        <p className="text-sm text-ink-muted" data-testid="default-period">
          Period: {periodText(period.defaultPeriod)}.
        </p>
      ) : null}
      <ErrorLine error={period.error} />
      {periodOk && period.from !== undefined && period.to !== undefined ? (
        <>
          <EventCatalogue from={period.from} to={period.to} membershipTo={membershipEnd(period.to)} />
          <LoneWindows from={period.from} to={period.to} />
          <ExportForm from={period.from} to={period.to} />
        </>
      ) : null}
    </SupervisorPage>
  );
}

/**
 * The end of the event query that tells which windows of the period an event holds: an event's
 * first arrival comes after its windows start, so one hour past the period's end covers windows
 * (a few minutes long) that start just before it.
 */
function membershipEnd(to: string): string {
  return new Date(Date.parse(to) + 3_600_000).toISOString();
}

/** Labelled windows whose start lies in the period and that no event holds, with their own filters. */
function LoneWindows({ from, to }: { from: string; to: string }) {
  const [station, setStation] = useState('');
  const [type, setType] = useState('');
  const [analyst, setAnalyst] = useState('');
  const [status, setStatusFilter] = useState('');
  const filters: ReviewFilters = { from, to, station: station.trim().toUpperCase() || undefined, type: type || undefined, analyst: analyst.trim() || undefined, status: status || undefined };
  const list = useQuery(reviewQuery(filters));
  const events = useQuery(eventCatalogueQuery(from, membershipEnd(to)));
  const held = new Set((events.data?.events ?? []).flatMap((e) => e.memberItemIds));
  const rows = (list.data?.items ?? []).filter((r) => !held.has(r.itemId));
  return (
    <Section title="Labelled windows no event holds">
      <p className="mb-2 text-sm text-ink-muted">
        Windows labelled as events that no multi-station event holds (often one station alone): each is a catalogue entry of its own, with its station time (earliest P pick, else earliest trigger) and no location.
      </p>
      <form className="mb-2 flex flex-wrap items-end gap-3" aria-label="Review filters" onSubmit={(e) => e.preventDefault()}>
        <label className="flex flex-col text-sm">
          Station
          <Input placeholder="KV01" value={station} onChange={(e) => setStation(e.target.value)} className="w-28" />
        </label>
        <label className="flex flex-col text-sm">
          Event type
          <Select value={type} onChange={(e) => setType(e.target.value)}>
            <option value="">any</option>
            {quakemlEventTypes.filter((t) => t !== 'not existing').map((t) => (
              <option key={t}>{t}</option>
            ))}
          </Select>
        </label>
        <label className="flex flex-col text-sm">
          Analyst
          <Input value={analyst} onChange={(e) => setAnalyst(e.target.value)} className="w-36" />
        </label>
        <label className="flex flex-col text-sm">
          Evaluation status
          <Select value={status} onChange={(e) => setStatusFilter(e.target.value)}>
            <option value="">any</option>
            {evaluationStatuses.map((s) => (
              <option key={s}>{s}</option>
            ))}
          </Select>
        </label>
      </form>
      <ErrorLine error={list.error ?? events.error} />
      {list.isPending || events.isPending ? <Loading label="Loading labelled windows…" /> : <ReviewTable rows={rows} />}
    </Section>
  );
}

function ReviewTable({ rows }: { rows: ReviewRow[] }) {
  const qc = useQueryClient();
  const [open, setOpen] = useState<number | null>(null);
  const [comment, setComment] = useState('');
  const [choice, setChoice] = useState<string>('confirmed');
  const done = () => {
    setOpen(null);
    setComment('');
    void qc.invalidateQueries({ queryKey: queryKeys.supervisor.part('review') });
  };
  const status = useMutation({ mutationFn: (r: ReviewRow) => setStatus(r.itemId, r.version, choice, comment), onSuccess: done });
  const ret = useMutation({ mutationFn: (r: ReviewRow) => returnItem(r.itemId, r.version, comment), onSuccess: done });
  if (rows.length === 0) return <EmptyState title="No lone labelled windows">Every labelled window matching these filters belongs to an event above.</EmptyState>;
  return (
    <TableScroll label="Labelled windows no event holds">
      <ErrorLine error={status.error ?? ret.error} />
      <Table caption="Labelled windows no event holds, newest window first">
        <THead>
          <tr>
            <Th>Event time (basis)</Th>
            <Th>Station</Th>
            <Th>Type</Th>
            <Th>Flag</Th>
            <Th>Analyst</Th>
            <Th>Group</Th>
            <Th>Evaluation status</Th>
            <Th>Action</Th>
          </tr>
        </THead>
        <TBody>
          {rows.map((r) => (
            <Tr key={r.itemId} data-testid={`review-row-${r.itemId}`}>
              <Td className="font-mono text-sm whitespace-nowrap">
                {/* ISO 8601 with milliseconds on screen; the export keeps the microseconds. */}
                {r.eventTime.replace(/(\.\d{3})\d*Z$/, '$1Z')}
                <span className="block font-sans text-xs text-ink-muted">{r.eventTimeBasis}</span>
              </Td>
              <Td>
                <a className="underline" href={`/queue/items/${r.itemId}`}>
                  {r.station}
                </a>
              </Td>
              <Td>
                {r.eventType} <span className="text-sm text-ink-muted">({r.certainty}, {r.picks} picks)</span>
              </Td>
              <Td>
                <FlagMarker flag={r.flag} />
              </Td>
              <Td className="text-sm">{r.analyst?.displayName ?? '—'}</Td>
              <Td className="text-sm">{r.candidateEventId ? `group #${r.candidateEventId}` : '—'}</Td>
              <Td>
                <Badge tone={r.evaluationStatus === 'rejected' ? 'danger' : r.evaluationStatus === 'preliminary' ? 'neutral' : 'ok'}>{r.evaluationStatus}</Badge>
                {r.reviewedBy ? <span className="block text-xs text-ink-muted">by {r.reviewedBy.displayName}</span> : null}
              </Td>
              <Td>
                {open === r.itemId ? (
                  <form className="flex flex-col gap-1" onSubmit={(e) => e.preventDefault()} aria-label={`Review item ${r.itemId}`}>
                    <label className="text-sm">
                      Status{' '}
                      <Select value={choice} onChange={(e) => setChoice(e.target.value)}>
                        {reviewStatuses.map((s) => (
                          <option key={s}>{s}</option>
                        ))}
                      </Select>
                    </label>
                    <label className="text-sm" htmlFor={`c-${r.itemId}`}>
                      Comment (required to return)
                    </label>
                    <textarea id={`c-${r.itemId}`} rows={2} className="rounded-xs border border-line bg-surface p-1 text-sm" value={comment} onChange={(e) => setComment(e.target.value)} />
                    <div className="flex gap-2">
                      <Button size="sm" variant="primary" onClick={() => status.mutate(r)}>
                        Set status
                      </Button>
                      <Button size="sm" disabled={comment.trim().length < 3} onClick={() => ret.mutate(r)}>
                        Return to queue
                      </Button>
                      <Button size="sm" variant="quiet" onClick={() => setOpen(null)}>
                        Cancel
                      </Button>
                    </div>
                  </form>
                ) : (
                  <Button size="sm" onClick={() => setOpen(r.itemId)}>
                    Review…
                  </Button>
                )}
              </Td>
            </Tr>
          ))}
        </TBody>
      </Table>
    </TableScroll>
  );
}

function ExportForm({ from, to }: { from: string; to: string }) {
  const [format, setFormat] = useState<'quakeml' | 'csv'>('quakeml');
  const [withPreliminary, setWithPreliminary] = useState(false);
  const status = withPreliminary ? 'preliminary,confirmed,reviewed,final' : 'confirmed,reviewed,final';
  return (
    <Section title="Export the reviewed catalogue">
      <p className="mb-2 text-sm text-ink-muted">
        One entry per event of the period above (<span className="font-mono whitespace-nowrap">{from}</span> to <span className="font-mono whitespace-nowrap">{to}</span>, UTC) with the chosen statuses: its preferred origin with its uncertainty and quality, arrivals, picks, amplitudes, station magnitudes and ML; a lone labelled window is an entry with its station time and no location. QuakeML 1.2 or CSV; both carry the caution that locations and magnitudes are triage aids to be reviewed, and that public information follows the network&rsquo;s procedures and local authorities. Resource ids use smi:seisift.local — a network publishing the catalogue sets its own authority id.
      </p>
      <div className="flex flex-wrap items-end gap-3">
        <label className="flex flex-col text-sm">
          Format
          <Select value={format} onChange={(e) => setFormat(e.target.value === 'csv' ? 'csv' : 'quakeml')}>
            <option value="quakeml">QuakeML 1.2 (XML)</option>
            <option value="csv">CSV</option>
          </Select>
        </label>
        <label className="flex items-center gap-1 text-sm">
          <input type="checkbox" checked={withPreliminary} onChange={(e) => setWithPreliminary(e.target.checked)} /> include unreviewed (preliminary)
        </label>
        <a className={buttonClass('primary')} href={exportUrl(from, to, format, status)} download>
          Download {format === 'csv' ? 'CSV' : 'QuakeML'}
        </a>
      </div>
    </Section>
  );
}
