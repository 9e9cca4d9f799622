import { useParams } from 'react-router';
import { StationPage } from '@client/features/stations/components/station-page';
import { NotFoundRoute } from './not-found';

/** /stations/:id: one station's page. */
export function StationRoute() {
  const { id } = useParams();
  const n = id !== undefined && /^\d{1,15}$/.test(id) ? Number(id) : null;
  if (n === null) return <NotFoundRoute />;
  return <StationPage key={n} stationId={n} />;
}
