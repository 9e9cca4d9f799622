import { Link } from 'react-router';
import { sortChannels } from '@shared/channel-order';
import { EmptyState } from '@client/components/ui/empty-state';
import { Loading } from '@client/components/ui/skeleton';
import { ScrollTable, Td, Th, ThActions, Tr } from '@client/components/ui/table';
import { TriageCaution } from '@client/components/ui/triage-caution';
import { paths } from '@client/config/paths';
import { can } from '@shared/auth/policies';
import { useMe, useStation, useStationHealth } from '@client/features/stations/api/stations';
import { Button } from '@client/components/ui/button';
import { ChannelForm, useDeleteChannel } from './channel-form';
import { BaselineSummary } from './baseline-summary';
import { NoiseTrend, PsdPlots, QcFindings, RecentItems } from './health-panels';
import { ProfileEditor } from './profile-editor';
import { formatCoordinates } from './station-list';
import { TokensPanel } from './tokens-panel';

function Section({ id, title, children }: { id: string; title: string; children: React.ReactNode }) {
  return (
    <section aria-labelledby={id} className="flex flex-col gap-2">
      <h2 id={id} className="text-md font-semibold">
        {title}
      </h2>
      {children}
    </section>
  );
}

/**
 * One station: its facts and channels, health (latest PSD per channel against NLNM/NHNM, noise
 * trend, QC findings, baseline), recent items, the processing profile editor and ingest tokens.
 * Controls the server would refuse are hidden or explained; the server decides.
 */
export function StationPage({ stationId }: { stationId: number }) {
  const station = useStation(stationId);
  const health = useStationHealth(stationId);
  const me = useMe();
  // Hiding only: the server checks every request with the same policy.
  const canEdit = me.data ? can(me.data.user, 'station.edit', { stationId }) : false;
  const canTokens = me.data ? can(me.data.user, 'token.manage', { stationId }) : false;
  const removeChannel = useDeleteChannel(stationId);
  if (station.isPending) return <Loading label="Loading the station…" />;
  if (station.error) {
    return (
      <EmptyState title="Station not available" action={<Link to={paths.stations.href}>Back to the stations</Link>}>
        {station.error.message}
      </EmptyState>
    );
  }
  const s = station.data.station;
  const key = `${s.network}.${s.code}`;
  const flagsShown = (health.data?.items.length ?? 0) > 0;
  return (
    <div className="flex max-w-6xl flex-col gap-6">
      <header className="flex flex-col gap-1">
        <p className="text-sm">
          <Link to={paths.stations.href} className="underline">Stations</Link> / <span className="font-mono">{key}</span>
        </p>
        <h1 className="text-xl font-semibold">
          <span className="font-mono">{key}</span> — {s.name}
        </h1>
        <p className="text-base text-ink-muted">
          <span className="font-mono">{formatCoordinates(s.latitude, s.longitude)}</span>, {s.elevationM.toFixed(0)} m.{s.siteDescription ? ` ${s.siteDescription}` : ''}
        </p>
      </header>

      {flagsShown ? <TriageCaution /> : null}

      <Section id="st-channels" title="Channels">
        {s.channels.length === 0 ? (
          <p className="text-sm text-ink-muted">No channels registered. Import the station’s StationXML, or uploads are analysed in counts without expected rates.</p>
        ) : (
          <ScrollTable
            label="Channels" caption={`Channels of ${key}`} captionHidden
            head={
              <Tr>
                <Th>Stream id</Th>
                <Th figure>Rate (Hz)</Th>
                <Th figure>Sensitivity</Th>
                <Th>at</Th>
                <Th>Input units</Th>
                <Th>Response</Th>
                {canEdit ? (
                  <ThActions />
                ) : null}
              </Tr>
            }
          >
            {sortChannels(s.channels, (c) => c.streamId).map((c) => (
              <Tr key={c.id}>
                <Td className="font-mono">{c.streamId}</Td>
                <Td figure>{c.sampleRateHz}</Td>
                <Td figure>{c.sensitivity === null ? '—' : c.sensitivity.toExponential(4)}</Td>
                <Td className="font-mono text-sm">{c.sensitivityFrequencyHz === null ? '—' : `${c.sensitivityFrequencyHz} Hz`}</Td>
                <Td className="font-mono text-sm">{c.sensitivityInputUnits ?? '—'}</Td>
                <Td className="text-sm">{c.hasResponse ? 'poles and zeros' : 'flat sensitivity only'}</Td>
                {canEdit ? (
                  <Td>
                    <Button size="sm" variant="quiet" disabled={removeChannel.isPending} onClick={() => removeChannel.mutate(c.id)} aria-label={`Remove channel ${c.streamId}`}>
                      Remove
                    </Button>
                  </Td>
                ) : null}
              </Tr>
            ))}
          </ScrollTable>
        )}
        {canEdit ? (
          <details className="rounded-sm border border-line px-3 py-2">
            <summary className="cursor-pointer text-sm font-medium">Add or replace a channel by hand</summary>
            <div className="pt-2">
              <ChannelForm stationId={s.id} />
            </div>
          </details>
        ) : null}
      </Section>

      <Section id="st-health" title="Health: latest spectrum per channel">
        {health.isPending ? <Loading label="Loading health…" rows={2} /> : null}
        {health.error ? <p role="alert" className="text-danger">{health.error.message}</p> : null}
        {health.data ? <PsdPlots health={health.data} /> : null}
      </Section>

      {health.data ? (
        <>
          <Section id="st-trend" title={`Noise level over the ${health.data.days} days up to the latest window`}>
            <NoiseTrend health={health.data} />
          </Section>
          <Section id="st-qc" title="QC findings">
            <QcFindings health={health.data} />
          </Section>
          <Section id="st-baseline" title="Noise baseline used by the score">
            <BaselineSummary baseline={health.data.baseline} />
          </Section>
          <Section id="st-items" title="Recent items">
            <RecentItems health={health.data} />
          </Section>
        </>
      ) : null}

      <Section id="st-profile" title="Processing profile">
        <ProfileEditor key={s.updatedAt} stationId={s.id} profile={s.profile} channels={s.channels} canEdit={canEdit} />
      </Section>

      {canTokens ? (
        <Section id="st-tokens" title="Ingest tokens">
          <TokensPanel stationId={s.id} stationKey={key} />
        </Section>
      ) : null}
    </div>
  );
}
