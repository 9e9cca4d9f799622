import { useQuery } from '@tanstack/react-query';
import { useState } from 'react';
import { PlotFrame } from '@client/components/ui/plot-frame';
import { Loading } from '@client/components/ui/skeleton';
import { Table, TBody, Td, Th, THead, Tr } from '@client/components/ui/table';
import { TriageCaution } from '@client/components/ui/triage-caution';
import { UtcTimeInput } from '@client/components/ui/utc-time-input';
import { dashboardQuery } from '@client/features/supervisor/api/supervisor-api';
import { daysAgoIso, ErrorLine, Section, SupervisorPage, withDayAxis, withDayAxisShare } from './common';
import { FamiliesPanel } from './families-panel';

const dayFormat = (v: number) => new Date(v * 1000).toISOString().slice(5, 10);

/**
 * /dashboard: items per day per station, the flag mix, median time to triage, analyst workload and
 * the false-alarm rate of “likely event” over time. Every series differs by dash pattern as well as
 * colour, and the legend names it.
 */
export function DashboardScreen() {
  // By arrival day (created_at), the 14 UTC days up to and including today.
  const [from, setFrom] = useState(() => daysAgoIso(13));
  const [to, setTo] = useState(() => daysAgoIso(-1));
  const periodOk = Date.parse(from) < Date.parse(to);
  const q = useQuery({ ...dashboardQuery(from, to), enabled: periodOk });
  const d = q.data;
  const x = d ? d.days.map((day) => Date.parse(`${day}T00:00:00Z`) / 1000) : [];
  return (
    <SupervisorPage title="Dashboard" summary="How the network's triage is going, per UTC day.">
      <TriageCaution variant="line" />
      <form className="flex flex-wrap items-end gap-3" aria-label="Period" onSubmit={(e) => e.preventDefault()}>
        <UtcTimeInput label="From (UTC)" value={from} onChange={setFrom} error={periodOk ? undefined : 'must be before To'} />
        <UtcTimeInput label="To (UTC, exclusive)" value={to} onChange={setTo} />
      </form>
      <ErrorLine error={q.error} />
      {!periodOk ? null : !d ? (
        <Loading label="Loading the dashboard…" />
      ) : (
        <div className="grid gap-4 lg:grid-cols-2">
          <PlotFrame
            title="Items per day per station"
            description={`Queue items that arrived each day, one line per station: ${d.itemsPerStation.map((s) => `${s.station} ${s.counts.reduce((a, b) => a + b, 0)}`).join(', ')}.`}
            configure={withDayAxis}
            x={{ label: 'day (UTC)', values: x, format: dayFormat }}
            y={{ label: 'items' }}
            series={d.itemsPerStation.map((s) => ({ label: s.station, values: s.counts }))}
          />
          <PlotFrame
            title="Flag mix"
            description="Items per day by automatic flag."
            configure={withDayAxis}
            x={{ label: 'day (UTC)', values: x, format: dayFormat }}
            y={{ label: 'items' }}
            series={d.flagMix.map((f) => ({ label: f.flag, values: f.counts }))}
          />
          <PlotFrame
            title="Median time to triage"
            description="Median minutes from an item's arrival to its first label, dismissal or escalation, by the day of the triage."
            configure={withDayAxis}
            x={{ label: 'day (UTC)', values: x, format: dayFormat }}
            y={{ label: 'median', unit: 'min' }}
            series={[{ label: 'median time to triage', values: d.medianTriageMinutes }]}
          />
          <div className="flex flex-col gap-1">
            <PlotFrame
              title="False-alarm rate of “likely event”"
              description="Of the items flagged likely event against their station's own noise that arrived each day and have been labelled or dismissed, the share that turned out to be noise."
              configure={withDayAxisShare}
              x={{ label: 'day (UTC)', values: x, format: dayFormat }}
              y={{ label: 'false alarms', format: (v) => `${Math.round(v * 100)} %` }}
              series={[{ label: 'false-alarm rate', values: d.falseAlarmRate }]}
            />
            <p className="text-xs text-ink-muted" data-testid="before-baseline">
              {beforeBaselineNote(d.flaggedWithTruth.reduce((a, b) => a + b, 0), d.flaggedBeforeBaseline.reduce((a, b) => a + b, 0))}
            </p>
          </div>
          <Section title="Analyst workload">
            <Table caption="Labels, dismissals and escalations per analyst in the period">
              <THead>
                <tr>
                  <Th>Analyst</Th>
                  <Th figure>Actions</Th>
                </tr>
              </THead>
              <TBody>
                {d.workload.length === 0 ? (
                  <Tr>
                    <Td colSpan={2}>No triage in this period.</Td>
                  </Tr>
                ) : (
                  d.workload.map((w) => (
                    <Tr key={w.analyst}>
                      <Td>{w.analyst}</Td>
                      <Td figure>{w.actions}</Td>
                    </Tr>
                  ))
                )}
              </TBody>
            </Table>
          </Section>
        </div>
      )}
      <FamiliesPanel />
    </SupervisorPage>
  );
}

/** What the false-alarm chart counts, in words: flags with a known outcome, and those left out because their station had no baseline yet. */
function beforeBaselineNote(withTruth: number, beforeBaseline: number): string {
  const counted = `${withTruth} “likely event” flag${withTruth === 1 ? '' : 's'} scored against the station's own noise and since labelled or dismissed.`;
  if (beforeBaseline === 0) return counted;
  return `${counted} Not counted: ${beforeBaseline} flagged before the station had a noise baseline (scored with the network default, e.g. a new station's first windows).`;
}
