import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { useEffect, useMemo, useState } from 'react';
import type { Evaluation, ThresholdValues } from '@shared/schemas/supervisor';
import { Button } from '@client/components/ui/button';
import { Input } from '@client/components/ui/input';
import { UtcTimeInput } from '@client/components/ui/utc-time-input';
import { PlotFrame } from '@client/components/ui/plot-frame';
import { Select } from '@client/components/ui/select';
import { Loading } from '@client/components/ui/skeleton';
import { Table, TBody, Td, Th, THead, Tr } from '@client/components/ui/table';
import { TriageCaution } from '@client/components/ui/triage-caution';
import { applyThresholds, rescore, stationsQuery, thresholdsQuery } from '@client/features/supervisor/api/supervisor-api';
import { usePeriod } from '@client/features/supervisor/hooks/use-period';
import { ErrorLine, periodText, Section, SupervisorPage, withPointsShare } from './common';
import { VelocityModelSection } from './velocity-model-section';
import { queryKeys } from '@client/lib/query-keys';

const pct = (v: number | null) => (v === null ? 'n/a' : `${(v * 100).toFixed(1)} %`);

/**
 * /thresholds: per station, how the flagging rule's thresholds do on that station's labelled
 * history (confusion counts, precision and recall as shown, now, and with proposed values), the
 * precision–recall curve over eventZ, applying new values (no silent re-scoring) and an explicit
 * re-score of a chosen period.
 */
export function ThresholdsScreen() {
  const qc = useQueryClient();
  const stations = useQuery(stationsQuery());
  const [stationId, setStationId] = useState<number | null>(null);
  useEffect(() => {
    if (stationId === null && stations.data?.[0]) setStationId(stations.data[0].id);
  }, [stations.data, stationId]);
  const [draft, setDraft] = useState<ThresholdValues | null>(null);
  const [proposed, setProposed] = useState<ThresholdValues | null>(null);
  const report = useQuery({ ...thresholdsQuery(stationId ?? 0, proposed), enabled: stationId !== null });
  useEffect(() => {
    if (report.data && draft === null) setDraft(report.data.current);
  }, [report.data, draft]);
  const apply = useMutation({
    mutationFn: (v: ThresholdValues) => applyThresholds(stationId ?? 0, v),
    onSuccess: (data) => {
      setProposed(null);
      setDraft(data.current);
      void qc.invalidateQueries({ queryKey: queryKeys.supervisor.part('thresholds') });
    },
  });
  // Re-score period, by default the 7 UTC days up to this station's latest window.
  const period = usePeriod(7, 'any', stationId ?? undefined);
  const periodOk = period.from !== undefined && period.to !== undefined && Date.parse(period.from) < Date.parse(period.to);
  const rs = useMutation({ mutationFn: () => rescore(stationId ?? 0, period.from ?? '', period.to ?? '') });

  const curve = useMemo(() => report.data?.curve ?? [], [report.data]);
  const x = useMemo(() => curve.map((p) => p.eventZ), [curve]);
  // Precision against recall: recall falls as eventZ rises, so the curve read backwards has recall
  // ascending, as uPlot needs its x values (points without a recall are left out).
  const pr = useMemo(() => {
    const pts = [...curve].reverse().filter((p) => p.recall !== null);
    return { recall: pts.map((p) => p.recall ?? 0), precision: pts.map((p) => p.precision), eventZ: pts.map((p) => p.eventZ) };
  }, [curve]);
  return (
    <SupervisorPage title="Thresholds" summary="The flagging rule against each station's labelled history, and the network's velocity model for locating events.">
      <TriageCaution variant="line" />
      <ErrorLine error={stations.error ?? report.error ?? apply.error ?? rs.error} />
      <label className="flex w-fit flex-col text-sm">
        Station
        <Select value={stationId ?? ''} onChange={(e) => { setStationId(Number(e.target.value)); setDraft(null); setProposed(null); }}>
          {stations.data?.map((s) => (
            <option key={s.id} value={s.id}>
              {s.network}.{s.code}
            </option>
          ))}
        </Select>
      </label>
      {!report.data || !draft ? (
        <Loading label="Loading the station's labelled history…" />
      ) : (
        <>
          <p className="text-sm">
            {report.data.station}: {report.data.labelled.events} items labelled as events, {report.data.labelled.noise} as noise (dismissed, “not existing” or rejected). Predicted event = flag “likely event”.
            {report.data.unreadable > 0 ? ` ${report.data.unreadable} items without a readable analysis are left out.` : ''}
          </p>
          <form
            className="flex flex-wrap items-end gap-3"
            aria-label="Proposed thresholds"
            onSubmit={(e) => {
              e.preventDefault();
              setProposed(draft);
            }}
          >
            {(['eventZ', 'noiseZ', 'centroidMaxFactor'] as const).map((k) => (
              <label key={k} className="flex flex-col text-sm">
                {k === 'eventZ' ? 'Event z (≥)' : k === 'noiseZ' ? 'Noise z (<)' : 'Centroid factor (× high-band edge)'}
                <Input type="number" step="0.1" className="w-32" value={draft[k]} onChange={(e) => setDraft({ ...draft, [k]: Number(e.target.value) })} />
              </label>
            ))}
            <Button type="submit">Evaluate</Button>
            <Button variant="primary" onClick={() => apply.mutate(draft)}>
              Apply to {report.data.station}
            </Button>
          </form>
          <p className="text-sm text-ink-muted">Applying writes the station profile and an audit row. Nothing is re-scored: old items keep the score they were shown with; the new rule applies to new windows.</p>
          <Table caption="Confusion counts on the labelled history">
            <THead>
              <tr>
                <Th>Thresholds</Th>
                <Th>TP</Th>
                <Th>FP</Th>
                <Th>FN</Th>
                <Th>TN</Th>
                <Th>Precision</Th>
                <Th>Recall</Th>
              </tr>
            </THead>
            <TBody>
              <EvalRow name="as shown (stored flags)" e={report.data.asShown} />
              <EvalRow name={`current (eventZ ${report.data.current.eventZ}, noiseZ ${report.data.current.noiseZ}, ×${report.data.current.centroidMaxFactor})`} e={report.data.currentEvaluation} />
              {report.data.proposed && report.data.proposedEvaluation ? (
                <EvalRow name={`proposed (eventZ ${report.data.proposed.eventZ}, noiseZ ${report.data.proposed.noiseZ}, ×${report.data.proposed.centroidMaxFactor})`} e={report.data.proposedEvaluation} />
              ) : null}
            </TBody>
          </Table>
          <PlotFrame
            title="Precision and recall across eventZ"
            description={`Precision (solid) and recall (dashed) of the flag “likely event” on ${report.data.station}'s labelled history as eventZ goes from ${x[0] ?? 0} to ${x[x.length - 1] ?? 0}.`}
            configure={withPointsShare}
            x={{ label: 'eventZ', values: x }}
            y={{ label: 'share', format: (v) => `${Math.round(v * 100)} %` }}
            series={[
              { label: 'precision', values: curve.map((p) => p.precision) },
              { label: 'recall', values: curve.map((p) => p.recall) },
            ]}
          />
          {pr.recall.length > 1 ? (
            <PlotFrame
              title="Precision–recall curve"
              description={`Precision against recall of “likely event” on ${report.data.station}'s labelled history, one point per eventZ, from ${pr.eventZ[0] ?? 0} (left) down to ${pr.eventZ[pr.eventZ.length - 1] ?? 0} (right).`}
              configure={withPointsShare}
              x={{ label: 'recall', values: pr.recall, format: (v) => `${Math.round(v * 100)} %` }}
              y={{ label: 'precision', format: (v) => `${Math.round(v * 100)} %` }}
              series={[{ label: 'precision at that recall', values: pr.precision }]}
            />
          ) : null}
          <Section title="Re-score a period">
            <form
              className="flex flex-wrap items-end gap-3"
              onSubmit={(e) => {
                e.preventDefault();
                rs.mutate();
              }}
            >
              {period.from !== undefined && period.to !== undefined ? (
                <>
                  <UtcTimeInput label="From (UTC)" value={period.from} onChange={period.setFrom} error={periodOk ? undefined : 'must be before To'} />
                  <UtcTimeInput label="To (UTC, exclusive)" value={period.to} onChange={period.setTo} />
                </>
              ) : null}
              <Button type="submit" disabled={!periodOk || rs.isPending}>
                Re-score with the current thresholds
              </Button>
            </form>
            {period.defaultPeriod && !period.edited ? (
              <p className="mt-1 text-sm text-ink-muted" data-testid="default-period">
                Period: {periodText(period.defaultPeriod, report.data.station)}.
              </p>
            ) : null}
            {rs.data ? (
              <p role="status" className="text-sm">
                Re-scored {rs.data.rescored} items; {rs.data.flagChanged} changed flag{rs.data.skipped ? `; ${rs.data.skipped} skipped (no readable analysis)` : ''}.
              </p>
            ) : null}
          </Section>
        </>
      )}
      <VelocityModelSection />
    </SupervisorPage>
  );
}

function EvalRow({ name, e }: { name: string; e: Evaluation }) {
  return (
    <Tr>
      <Th scope="row" className="font-normal text-ink">
        {name}
      </Th>
      <Td className="font-mono">{e.tp}</Td>
      <Td className="font-mono">{e.fp}</Td>
      <Td className="font-mono">{e.fn}</Td>
      <Td className="font-mono">{e.tn}</Td>
      <Td className="font-mono">{pct(e.precision)}</Td>
      <Td className="font-mono">{pct(e.recall)}</Td>
    </Tr>
  );
}
