import { useState } from 'react';
import type { EventDetail } from '@shared/schemas/events';
import { eventEvaluationStatuses } from '@shared/schemas/events';
import { quakemlEventTypes, typeCertainties } from '@shared/schemas/label';
import { Button } from '@client/components/ui/button';
import { Select } from '@client/components/ui/select';
import { groupChannelNotes } from '@client/features/events/lib/group-notes';

/** A titled block of the side column. */
export function Panel({ title, children, testId }: { title: string; children: React.ReactNode; testId?: string }) {
  return (
    <section aria-label={title} data-testid={testId} className="rounded-sm border border-line bg-surface p-2">
      <h2 className="pb-1 text-sm font-semibold">{title}</h2>
      {children}
    </section>
  );
}

const km = (v: number | null | undefined, digits = 1) => (v === null || v === undefined ? '—' : `${v.toFixed(digits)} km`);

/** The preferred origin with its uncertainties, the relocation action and a refusal in words. */
export function OriginPanel({ detail, mayEdit, onRelocate, busy }: { detail: EventDetail; mayEdit: boolean; onRelocate: (fixedDepthKm?: number) => void; busy: boolean }) {
  const o = detail.origin;
  const [fixDepth, setFixDepth] = useState('');
  const fixed = fixDepth.trim() === '' ? undefined : Number(fixDepth);
  const fixedOk = fixed === undefined || (Number.isFinite(fixed) && fixed >= 0 && fixed <= 100);
  return (
    <Panel title="Origin" testId="origin-panel">
      {o ? (
        <dl className="grid grid-cols-[auto_1fr] gap-x-3 gap-y-0.5 text-sm" data-origin-id={o.id} data-origin={`${o.time} ${o.latitude.toFixed(5)} ${o.longitude.toFixed(5)} ${o.depthKm.toFixed(2)}`}>
          <dt className="text-ink-muted">Time (UTC)</dt>
          <dd className="font-mono">
            {o.time} ± {o.uncertainty.timeS.toFixed(2)} s
          </dd>
          <dt className="text-ink-muted">Epicentre</dt>
          <dd className="font-mono">
            {o.latitude.toFixed(4)}°, {o.longitude.toFixed(4)}° ± {km(o.uncertainty.horizontalKm68)}
          </dd>
          <dt className="text-ink-muted">68 % ellipse</dt>
          <dd className="font-mono">
            {km(o.uncertainty.ellipse.semiMajorKm)} × {km(o.uncertainty.ellipse.semiMinorKm)}, major axis {o.uncertainty.ellipse.azimuthDeg.toFixed(0)}°
          </dd>
          <dt className="text-ink-muted">Depth</dt>
          <dd className="font-mono">
            {km(o.depthKm)} {o.depthFixed ? `(fixed: ${o.depthFixedReason ?? 'by the analyst'})` : `± ${km(o.uncertainty.depthKm)}`}
          </dd>
          <dt className="text-ink-muted">Fit</dt>
          <dd className="font-mono">
            RMS {o.rmsS.toFixed(3)} s · gap {o.azimuthalGapDeg.toFixed(0)}° · nearest {km(o.minimumDistanceKm)}
          </dd>
          <dt className="text-ink-muted">Used</dt>
          <dd>
            {o.usedPhases} phases at {o.usedStations} stations ({detail.picks.usedForLocation === 'manual' ? 'analysts’ picks' : 'automatic suggestions'}), {o.evaluationMode}
          </dd>
          <dt className="text-ink-muted">Model</dt>
          <dd>
            {o.velocityModel.name}
            {o.velocityModel.isDefault ? ' (Seisift’s placeholder: the network should set its own)' : ''}
          </dd>
        </dl>
      ) : (
        <p className="text-sm">Not located yet.</p>
      )}
      {detail.event.locationRefusal ? (
        <p role="status" className="mt-1 rounded-xs border-l-4 border-l-warn bg-warn-wash px-2 py-1 text-sm" data-testid="location-refusal">
          The last relocation was refused: {detail.event.locationRefusal}
          {o ? ' The origin above is the previous one.' : ''}
        </p>
      ) : null}
      {o && o.notes.length > 0 ? (
        <ul className="mt-1 list-disc pl-5 text-xs text-ink-muted">
          {groupChannelNotes(o.notes).map((n) => (
            <li key={n}>{n}</li>
          ))}
        </ul>
      ) : null}
      {mayEdit ? (
        <div className="mt-2 flex flex-wrap items-end gap-2">
          <label className="flex flex-col text-xs text-ink-muted">
            Fix depth (km, empty: solve)
            <input
              className="h-7 w-24 rounded-xs border border-line-strong bg-raised px-1 font-mono text-sm text-ink"
              inputMode="decimal"
              value={fixDepth}
              onChange={(e) => setFixDepth(e.target.value)}
              aria-invalid={!fixedOk}
            />
          </label>
          <Button size="sm" variant="primary" shortcut="L" disabled={busy || !fixedOk} onClick={() => onRelocate(fixed)}>
            Relocate
          </Button>
          {!fixedOk ? <span className="text-xs text-danger">Depth must be 0–100 km</span> : null}
        </div>
      ) : null}
    </Panel>
  );
}

/** Network ML and every station magnitude with the amplitudes it came from. */
export function MagnitudePanel({ detail }: { detail: EventDetail }) {
  const m = detail.magnitude;
  return (
    <Panel title="Local magnitude" testId="magnitude-panel">
      {m ? (
        <p className="text-sm" data-magnitude={m.value.toFixed(2)}>
          <strong className="font-mono text-md">
            {m.type} {m.value.toFixed(1)}
          </strong>{' '}
          {m.uncertainty !== null ? `± ${m.uncertainty.toFixed(1)} ` : ''}from {m.stationCount} stations ({m.method})
        </p>
      ) : (
        <p className="text-sm">No magnitude: it needs an origin and at least one horizontal channel with a usable response.</p>
      )}
      {detail.stationMagnitudes.length > 0 ? (
        <table className="mt-1 w-full text-sm">
          <caption className="sr-only">Station magnitudes</caption>
          <thead className="text-left text-xs text-ink-muted">
            <tr>
              <th scope="col">Station</th>
              <th scope="col" className="text-right">ML</th>
              <th scope="col" className="text-right">WA amp.</th>
              <th scope="col" className="text-right">Period</th>
              <th scope="col" className="text-right">Hypo. dist.</th>
            </tr>
          </thead>
          <tbody className="font-mono">
            {detail.stationMagnitudes.map((s) => (
              <tr key={s.station}>
                <td>{s.station.split('.')[1]}</td>
                <td className="text-right">{s.value.toFixed(2)}</td>
                <td className="text-right">{s.amplitudeMm.toPrecision(3)} mm</td>
                <td className="text-right">{s.periodS === null ? '—' : `${s.periodS.toFixed(2)} s`}</td>
                <td className="text-right">{s.hypocentralDistanceKm.toFixed(1)} km</td>
              </tr>
            ))}
          </tbody>
        </table>
      ) : null}
      {detail.amplitudes.length > 0 ? (
        <details className="mt-1 text-xs">
          <summary className="cursor-pointer text-ink-muted">Amplitudes per channel ({detail.amplitudes.length})</summary>
          <ul className="font-mono">
            {detail.amplitudes.map((a) => (
              <li key={a.id}>
                {a.streamId}: {a.amplitudeMm.toPrecision(3)} mm zero-to-peak (Wood-Anderson) at {a.time.slice(11)} · {a.evaluationMode === 'manual' ? `re-picked by ${a.author ?? 'an analyst'}` : 'automatic'}
              </li>
            ))}
          </ul>
        </details>
      ) : null}
    </Panel>
  );
}

/** Residuals of the phases the preferred origin used. */
export function ArrivalsPanel({ detail }: { detail: EventDetail }) {
  if (detail.arrivals.length === 0) return null;
  return (
    <Panel title="Arrivals and residuals" testId="arrivals-panel">
      <table className="w-full text-sm">
        <caption className="sr-only">Arrivals of the preferred origin</caption>
        <thead className="text-left text-xs text-ink-muted">
          <tr>
            <th scope="col">Channel</th>
            <th scope="col">Phase</th>
            <th scope="col" className="text-right">Residual</th>
            <th scope="col" className="text-right">Dist.</th>
            <th scope="col" className="text-right">Az.</th>
            <th scope="col" className="text-right">Weight</th>
          </tr>
        </thead>
        <tbody className="font-mono">
          {detail.arrivals.map((a) => (
            <tr key={`${a.streamId}-${a.phase}-${a.pickId ?? ''}`}>
              <td>{a.streamId.split('.').slice(1).join('.')}</td>
              <td>
                {a.phase}
                <span className="text-ink-muted">{a.modelPhase !== a.phase ? ` (${a.modelPhase})` : ''}</span>
              </td>
              <td className="text-right">{`${a.residualS >= 0 ? '+' : '−'}${Math.abs(a.residualS).toFixed(2)} s`}</td>
              <td className="text-right">{a.distanceKm.toFixed(1)}</td>
              <td className="text-right">{a.azimuthDeg.toFixed(0)}°</td>
              <td className="text-right">{a.weight.toFixed(2)}</td>
            </tr>
          ))}
        </tbody>
      </table>
    </Panel>
  );
}

/** The automatic picks, shown apart, to accept one by one or all at once. */
export function SuggestionsPanel({ detail, mayPick, busy, onAccept }: { detail: EventDetail; mayPick: boolean; busy: boolean; onAccept: (ids?: number[]) => void }) {
  const taken = new Set(detail.picks.analyst.map((p) => `${p.streamId.split('.').slice(0, 2).join('.')}#${p.phase}`));
  const open = detail.picks.automatic.filter((p) => !taken.has(`${p.streamId.split('.').slice(0, 2).join('.')}#${p.phase}`));
  return (
    <Panel title={`Automatic suggestions (${open.length} open)`} testId="suggestions-panel">
      <p className="text-xs text-ink-muted">
        Drawn dotted with “?”. The location uses the analysts’ picks as soon as there is one, never a mix: accept the suggestions you agree with first, then move or add picks.
      </p>
      {mayPick && open.length > 0 ? (
        <Button size="sm" className="mt-1" shortcut="⇧A" disabled={busy} onClick={() => onAccept()}>
          Accept all {open.length}
        </Button>
      ) : null}
      <ul className="mt-1 max-h-40 overflow-auto text-sm">
        {open.map((p) => (
          <li key={p.id} className="flex items-center justify-between gap-2 font-mono">
            <span>
              {p.streamId.split('.').slice(1).join('.')} {p.phase} {p.time.slice(11, 23)} ±{p.uncertaintyS.toFixed(2)} s
            </span>
            {mayPick ? (
              <Button size="sm" variant="quiet" disabled={busy} onClick={() => onAccept([p.id])} aria-label={`Accept the ${p.phase} suggestion on ${p.streamId}`}>
                Accept
              </Button>
            ) : null}
          </li>
        ))}
      </ul>
    </Panel>
  );
}

/** The event's type, certainty and evaluation status; applied to every member window by the server. */
export function EventLabelPanel({ detail, mayEdit, mayEvaluate, busy, onSave }: { detail: EventDetail; mayEdit: boolean; mayEvaluate: boolean; busy: boolean; onSave: (v: { eventType: string | null; typeCertainty: string | null; evaluationStatus?: string }) => void }) {
  const [type, setType] = useState(detail.event.eventType ?? '');
  const [certainty, setCertainty] = useState(detail.event.typeCertainty ?? 'suspected');
  const [status, setStatus] = useState<string>(detail.event.evaluationStatus);
  return (
    <Panel title="Label the event" testId="event-label-panel">
      <p className="text-xs text-ink-muted">The label goes to every member window of the event.</p>
      <div className="mt-1 grid grid-cols-2 gap-2">
        <label className="flex flex-col text-xs text-ink-muted">
          Type
          <Select value={type} onChange={(e) => setType(e.target.value)} disabled={!mayEdit}>
            <option value="">not set</option>
            {quakemlEventTypes.map((t) => (
              <option key={t} value={t}>
                {t}
              </option>
            ))}
          </Select>
        </label>
        <label className="flex flex-col text-xs text-ink-muted">
          Certainty
          <Select value={certainty} onChange={(e) => setCertainty(e.target.value)} disabled={!mayEdit}>
            {typeCertainties.map((t) => (
              <option key={t} value={t}>
                {t}
              </option>
            ))}
          </Select>
        </label>
        {mayEvaluate ? (
          <label className="col-span-2 flex flex-col text-xs text-ink-muted">
            Evaluation status
            <Select value={status} onChange={(e) => setStatus(e.target.value)}>
              {eventEvaluationStatuses.map((t) => (
                <option key={t} value={t}>
                  {t}
                </option>
              ))}
            </Select>
          </label>
        ) : (
          <p className="col-span-2 text-xs">Evaluation status: {detail.event.evaluationStatus} (set by a supervisor)</p>
        )}
      </div>
      {mayEdit ? (
        <Button
          size="sm"
          className="mt-2"
          disabled={busy}
          onClick={() => onSave({ eventType: type === '' ? null : type, typeCertainty: type === '' ? null : certainty, ...(mayEvaluate ? { evaluationStatus: status } : {}) })}
        >
          Save label
        </Button>
      ) : null}
    </Panel>
  );
}
