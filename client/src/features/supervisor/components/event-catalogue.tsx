import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { Fragment, useState } from 'react';
import { Link } from 'react-router';
import { eventEvaluationStatuses, type EventSummary } from '@shared/schemas/events';
import { quakemlEventTypes, typeCertainties } from '@shared/schemas/label';
import { Badge, type BadgeTone } from '@client/components/ui/badge';
import { Button } from '@client/components/ui/button';
import { EmptyState } from '@client/components/ui/empty-state';
import { Input } from '@client/components/ui/input';
import { Select } from '@client/components/ui/select';
import { Loading } from '@client/components/ui/skeleton';
import { Table, TableScroll, TBody, Td, Th, THead, Tr } from '@client/components/ui/table';
import { paths } from '@client/config/paths';
import { eventCatalogueQuery, eventMembersQuery, returnEventToAnalysts, setEventStatus } from '@client/features/supervisor/api/event-catalogue-api';
import { queryKeys } from '@client/lib/query-keys';
import { ErrorLine, Section } from './common';

/** Filters of the event catalogue (all client-side over the period's events). */
export type EventFilters = { type: string; status: string; station: string };

/**
 * Whether an event passes the filters: type ('' any, 'untyped' none yet), evaluation status, and a
 * station code (`KV01` or `XX.KV01`) among its member windows' stations.
 */
export function eventMatches(ev: EventSummary, f: EventFilters): boolean {
  if (f.type === 'untyped' ? ev.eventType !== null : f.type !== '' && ev.eventType !== f.type) return false;
  if (f.status !== '' && ev.evaluationStatus !== f.status) return false;
  const st = f.station.trim().toUpperCase();
  if (st !== '' && !ev.stations.some((s) => s === st || s.endsWith(`.${st}`))) return false;
  return true;
}

/** Latitude and longitude in degrees with hemisphere letters, 3 decimals (about 100 m). */
export function positionText(latitude: number, longitude: number): string {
  return `${Math.abs(latitude).toFixed(3)}° ${latitude < 0 ? 'S' : 'N'}, ${Math.abs(longitude).toFixed(3)}° ${longitude < 0 ? 'W' : 'E'}`;
}

/** An ISO time shown to the millisecond (the export keeps the microseconds). */
const ms = (iso: string) => iso.replace(/(\.\d{3})\d*Z$/, '$1Z');

const statusTone = (s: EventSummary['evaluationStatus']): BadgeTone => (s === 'rejected' ? 'danger' : s === 'preliminary' ? 'neutral' : s === 'final' ? 'accent' : 'ok');

/**
 * The catalogue of the period: one row per event (origin time, position, depth, ML, stations,
 * azimuthal gap, RMS, type, evaluation status), its member windows opened on demand, a link to
 * the event screen, and the supervisor's review (type, certainty, evaluation status) or return to
 * the analysts. Events the locator refused are listed with the reason.
 * @param from start of the period (ISO UTC, by first arrival)
 * @param to end of the period, exclusive
 * @param membershipTo the list is fetched up to here (a little past `to`) so the lone-window list
 *   can tell which windows near the end of the period an event holds; rows past `to` are not shown
 */
export function EventCatalogue({ from, to, membershipTo }: { from: string; to: string; membershipTo: string }) {
  const q = useQuery(eventCatalogueQuery(from, membershipTo));
  const [filters, setFilters] = useState<EventFilters>({ type: '', status: '', station: '' });
  const inPeriod = (q.data?.events ?? []).filter((e) => Date.parse(e.firstArrival) < Date.parse(to));
  const rows = inPeriod.filter((e) => eventMatches(e, filters));
  const located = inPeriod.filter((e) => e.originTime !== null).length;
  return (
    <Section title="Events">
      {q.data ? (
        <p role="note" className="mb-2 text-sm text-ink-muted" data-testid="event-caution">
          {q.data.caution} Positions with their 68 % horizontal uncertainty; ML is the median of the station magnitudes, ± its spread.
        </p>
      ) : null}
      <form className="mb-2 flex flex-wrap items-end gap-3" aria-label="Event filters" onSubmit={(e) => e.preventDefault()}>
        <label className="flex flex-col text-sm">
          Event type
          <Select value={filters.type} onChange={(e) => setFilters({ ...filters, type: e.target.value })}>
            <option value="">any</option>
            <option value="untyped">not typed yet</option>
            {quakemlEventTypes.map((t) => (
              <option key={t}>{t}</option>
            ))}
          </Select>
        </label>
        <label className="flex flex-col text-sm">
          Evaluation status
          <Select value={filters.status} onChange={(e) => setFilters({ ...filters, status: e.target.value })}>
            <option value="">any</option>
            {eventEvaluationStatuses.map((s) => (
              <option key={s}>{s}</option>
            ))}
          </Select>
        </label>
        <label className="flex flex-col text-sm">
          Station
          <Input placeholder="KV01" value={filters.station} onChange={(e) => setFilters({ ...filters, station: e.target.value })} className="w-28" />
        </label>
        {q.data ? (
          <p className="text-sm text-ink-muted" data-testid="event-count">
            {rows.length} of {inPeriod.length} events shown; {located} located, {inPeriod.length - located} not located.
          </p>
        ) : null}
      </form>
      <ErrorLine error={q.error} />
      {q.isPending ? <Loading label="Loading events…" /> : rows.length === 0 ? <EmptyState title="No events">No event in this period matches these filters.</EmptyState> : <EventTable rows={rows} />}
    </Section>
  );
}

function EventTable({ rows }: { rows: EventSummary[] }) {
  const [openWindows, setOpenWindows] = useState<ReadonlySet<number>>(new Set());
  const [reviewing, setReviewing] = useState<number | null>(null);
  const toggle = (id: number) =>
    setOpenWindows((s) => {
      const n = new Set(s);
      if (n.has(id)) n.delete(id);
      else n.add(id);
      return n;
    });
  return (
    <TableScroll label="Events of the period">
      <Table caption="Events, newest first arrival first">
        <THead>
          <tr>
            <Th>Origin time (UTC)</Th>
            <Th>Position (±68 %)</Th>
            <Th>Depth</Th>
            <Th>ML</Th>
            <Th figure>Stations</Th>
            <Th figure>Gap</Th>
            <Th figure>RMS</Th>
            <Th>Type</Th>
            <Th>Evaluation status</Th>
            <Th>Actions</Th>
          </tr>
        </THead>
        <TBody>
          {rows.map((ev) => (
            <Fragment key={ev.id}>
              <Tr data-testid={`event-row-${ev.id}`}>
                <Td className="font-mono text-sm whitespace-nowrap">
                  {ev.originTime ? ms(ev.originTime) : <span className="text-ink-muted">{ms(ev.firstArrival)}</span>}
                  <span className="block font-sans text-xs text-ink-muted">{ev.originTime ? `event #${ev.id}` : `first arrival, event #${ev.id}`}</span>
                </Td>
                {ev.latitude !== null && ev.longitude !== null ? (
                  <>
                    <Td className="font-mono text-sm whitespace-nowrap">
                      {positionText(ev.latitude, ev.longitude)}
                      {ev.horizontalKm68 !== null ? <span className="block font-sans text-xs text-ink-muted">± {ev.horizontalKm68.toFixed(1)} km</span> : null}
                    </Td>
                    <Td className="text-sm whitespace-nowrap">
                      {ev.depthKm !== null ? `${ev.depthKm.toFixed(1)} km` : '—'}
                      {ev.depthFixed ? <span className="block text-xs text-warn">fixed, not resolved</span> : null}
                    </Td>
                    <Td className="text-sm whitespace-nowrap">
                      {ev.magnitude !== null ? (
                        <>
                          {ev.magnitudeType ?? 'ML'} {ev.magnitude.toFixed(1)}
                          {ev.magnitudeUncertainty !== null ? ` ± ${ev.magnitudeUncertainty.toFixed(1)}` : ''}
                          <span className="block text-xs text-ink-muted">{ev.magnitudeStationCount !== null ? `${ev.magnitudeStationCount} station${ev.magnitudeStationCount === 1 ? '' : 's'}` : ''}</span>
                        </>
                      ) : (
                        <span className="text-ink-muted">none (see event)</span>
                      )}
                    </Td>
                  </>
                ) : (
                  <Td colSpan={3} className="text-sm">
                    <Badge tone="warn">not located</Badge> <span className="text-ink-muted">{ev.locationRefusal ?? 'no origin yet'}</span>
                  </Td>
                )}
                <Td figure className="text-sm">
                  {ev.stationCount}
                  {ev.usedStations !== null ? <span className="block text-xs text-ink-muted">{ev.usedStations} used</span> : null}
                </Td>
                <Td figure className="text-sm">
                  {ev.azimuthalGapDeg !== null ? `${Math.round(ev.azimuthalGapDeg)}°` : '—'}
                </Td>
                <Td figure className="text-sm whitespace-nowrap">
                  {ev.rmsS !== null ? `${ev.rmsS.toFixed(2)} s` : '—'}
                </Td>
                <Td className="text-sm whitespace-nowrap">
                  {ev.eventType ?? <span className="text-ink-muted">not typed</span>}
                  {ev.typeCertainty ? <span className="block text-xs text-ink-muted">{ev.typeCertainty}</span> : null}
                </Td>
                <Td>
                  <Badge tone={statusTone(ev.evaluationStatus)}>{ev.evaluationStatus}</Badge>
                  {ev.evaluationMode ? <span className="block text-xs text-ink-muted">{ev.evaluationMode} origin</span> : null}
                </Td>
                <Td>
                  <div className="flex items-center gap-1 whitespace-nowrap">
                    <Button size="sm" variant="quiet" aria-expanded={openWindows.has(ev.id)} aria-controls={`event-windows-${ev.id}`} onClick={() => toggle(ev.id)}>
                      {openWindows.has(ev.id) ? 'Hide' : 'Windows'} ({ev.memberItemIds.length})
                    </Button>
                    <Link className="inline-flex h-7 items-center px-1 text-sm underline" to={`${paths.event.href}/${ev.id}`} aria-label={`Open event ${ev.id}`}>
                      Open
                    </Link>
                    <Button size="sm" onClick={() => setReviewing(reviewing === ev.id ? null : ev.id)} aria-expanded={reviewing === ev.id}>
                      Review…
                    </Button>
                  </div>
                </Td>
              </Tr>
              {openWindows.has(ev.id) ? (
                <tr id={`event-windows-${ev.id}`}>
                  <td colSpan={10} className="border-b border-line bg-raised px-3 py-2">
                    <MemberWindows eventId={ev.id} />
                  </td>
                </tr>
              ) : null}
              {reviewing === ev.id ? (
                <tr>
                  <td colSpan={10} className="border-b border-line bg-raised px-3 py-2">
                    <EventReviewForm ev={ev} onDone={() => setReviewing(null)} />
                  </td>
                </tr>
              ) : null}
            </Fragment>
          ))}
        </TBody>
      </Table>
    </TableScroll>
  );
}

/** The member windows of one event, each a link to its queue item. */
function MemberWindows({ eventId }: { eventId: number }) {
  const q = useQuery(eventMembersQuery(eventId));
  if (q.isPending) return <Loading label="Loading the windows…" />;
  if (q.error) return <ErrorLine error={q.error} />;
  const members = q.data.members.filter((m) => !m.removed);
  return (
    <ul className="flex flex-col gap-0.5 text-sm" aria-label={`Windows of event ${eventId}`}>
      {members.map((m) => (
        <li key={m.itemId} className="flex flex-wrap gap-3">
          <Link className="underline" to={`${paths.queueItem.href}/${m.itemId}`}>
            {m.station} (item {m.itemId})
          </Link>
          <span className="font-mono">window from {ms(m.windowStart)}</span>
          <span className="text-ink-muted">{m.source === 'group' ? 'from the candidate group' : 'added by an analyst'}</span>
        </li>
      ))}
    </ul>
  );
}

/** The supervisor's decision on one event: type, certainty and evaluation status, or return to the analysts. */
function EventReviewForm({ ev, onDone }: { ev: EventSummary; onDone: () => void }) {
  const qc = useQueryClient();
  const [type, setType] = useState(ev.eventType ?? 'earthquake');
  const [certainty, setCertainty] = useState(ev.typeCertainty ?? 'suspected');
  const [status, setStatus] = useState<string>(ev.evaluationStatus === 'preliminary' ? 'confirmed' : ev.evaluationStatus);
  const [comment, setComment] = useState('');
  const done = () => {
    void qc.invalidateQueries({ queryKey: queryKeys.supervisor.part('review') });
    onDone();
  };
  const save = useMutation({ mutationFn: () => setEventStatus({ id: ev.id, version: ev.version, eventType: type, typeCertainty: certainty }, status), onSuccess: done });
  const back = useMutation({ mutationFn: () => returnEventToAnalysts(ev.id, ev.version, comment), onSuccess: done });
  const commentId = `event-return-${ev.id}`;
  return (
    <form className="flex flex-wrap items-end gap-3" aria-label={`Review event ${ev.id}`} onSubmit={(e) => e.preventDefault()}>
      <label className="flex flex-col text-sm">
        Event type
        <Select value={type} onChange={(e) => setType(e.target.value)}>
          {quakemlEventTypes.map((t) => (
            <option key={t}>{t}</option>
          ))}
        </Select>
      </label>
      <label className="flex flex-col text-sm">
        Type certainty
        <Select value={certainty} onChange={(e) => setCertainty(e.target.value)}>
          {typeCertainties.map((c) => (
            <option key={c}>{c}</option>
          ))}
        </Select>
      </label>
      <label className="flex flex-col text-sm">
        Evaluation status
        <Select value={status} onChange={(e) => setStatus(e.target.value)}>
          {eventEvaluationStatuses.map((s) => (
            <option key={s}>{s}</option>
          ))}
        </Select>
      </label>
      <Button size="sm" variant="primary" onClick={() => save.mutate()} disabled={save.isPending}>
        Save event {ev.id}
      </Button>
      <div className="flex min-w-72 flex-1 flex-col text-sm">
        <label htmlFor={commentId}>Comment for the analysts (required to return)</label>
        <textarea id={commentId} rows={2} className="rounded-xs border border-line bg-surface p-1 text-sm" value={comment} onChange={(e) => setComment(e.target.value)} />
      </div>
      <Button size="sm" disabled={comment.trim().length < 3 || back.isPending} onClick={() => back.mutate()}>
        Return to analysts
      </Button>
      <Button size="sm" variant="quiet" onClick={onDone}>
        Cancel
      </Button>
      <p className="w-full text-xs text-ink-muted">
        Returning sets the event back to preliminary (out of the reviewed catalogue), puts the comment on each of its windows, and sends its labelled windows back to the queue.
      </p>
      <div className="w-full">
        <ErrorLine error={save.error ?? back.error} />
      </div>
    </form>
  );
}
