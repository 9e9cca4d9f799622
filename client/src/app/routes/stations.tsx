import { StationList } from '@client/features/stations/components/station-list';

/** /stations: the station registry. */
export function StationsRoute() {
  return <StationList />;
}
