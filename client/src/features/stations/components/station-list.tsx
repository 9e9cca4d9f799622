import { useState } from 'react';
import { Link } from 'react-router';
import { Button } from '@client/components/ui/button';
import { EmptyState } from '@client/components/ui/empty-state';
import { Loading } from '@client/components/ui/skeleton';
import { ScrollTable, Td, Th, Tr } from '@client/components/ui/table';
import { paths } from '@client/config/paths';
import { can } from '@shared/auth/policies';
import { useMe, useStations } from '@client/features/stations/api/stations';
import { StationCreateForm } from './station-create-form';
import { StationXmlImport } from './stationxml-import';

/** Coordinates in degrees with 4 decimals and a hemisphere letter. */
export function formatCoordinates(lat: number, lon: number): string {
  return `${Math.abs(lat).toFixed(4)}° ${lat >= 0 ? 'N' : 'S'}, ${Math.abs(lon).toFixed(4)}° ${lon >= 0 ? 'E' : 'W'}`;
}

/** The station list: every station the user may see, linking to each station's page. */
export function StationList() {
  const { data, error, isPending } = useStations();
  const [panel, setPanel] = useState<'none' | 'create' | 'import'>('none');
  const me = useMe();
  const mayCreate = me.data ? can(me.data.user, 'station.create') : false;
  return (
    <div className="flex max-w-5xl flex-col gap-4">
      <header className="flex flex-wrap items-end justify-between gap-3">
        <div>
          <h1 className="text-xl font-semibold">Stations</h1>
          <p className="text-base text-ink-muted">Registry, processing profiles, ingest tokens and health of the stations you look after.</p>
        </div>
        <div className="flex gap-2">
          {mayCreate ? (
            <Button onClick={() => setPanel(panel === 'create' ? 'none' : 'create')} aria-expanded={panel === 'create'}>
              Register a station
            </Button>
          ) : null}
          <Button onClick={() => setPanel(panel === 'import' ? 'none' : 'import')} aria-expanded={panel === 'import'}>
            Import StationXML
          </Button>
        </div>
      </header>
      {panel === 'create' ? <StationCreateForm onCancel={() => setPanel('none')} /> : null}
      {panel === 'import' ? <StationXmlImport onDone={() => undefined} /> : null}
      {isPending ? <Loading label="Loading stations…" /> : null}
      {error ? <p role="alert" className="text-danger">{error.message}</p> : null}
      {data && data.stations.length === 0 ? (
        <EmptyState title="No stations yet">Register a station or import its StationXML; an admin may also assign you existing stations.</EmptyState>
      ) : null}
      {data && data.stations.length > 0 ? (
        <ScrollTable
          label="Stations" caption="Stations you may see" captionHidden
          head={
            <Tr>
              <Th>Station</Th>
              <Th>Name</Th>
              <Th>Position</Th>
              <Th figure>Elevation (m)</Th>
              <Th figure>Channels</Th>
              <Th>Latest window (UTC)</Th>
            </Tr>
          }
        >
          {data.stations.map((s) => (
            <Tr key={s.id}>
              <Td className="font-mono">
                <Link to={`${paths.stations.href}/${s.id}`}>
                  {s.network}.{s.code}
                </Link>
              </Td>
              <Td>{s.name}</Td>
              <Td className="font-mono text-sm">{formatCoordinates(s.latitude, s.longitude)}</Td>
              <Td figure>{s.elevationM.toFixed(0)}</Td>
              <Td figure>{s.channelCount}</Td>
              <Td className="font-mono text-sm">{s.lastWindowAt ?? '—'}</Td>
            </Tr>
          ))}
        </ScrollTable>
      ) : null}
    </div>
  );
}
