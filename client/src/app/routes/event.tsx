import { useParams } from 'react-router';
import { EventScreen } from '@client/features/events/components/event-screen';
import { NotFoundRoute } from './not-found';

/** /events/:id: one event on the event workbench. */
export function EventRoute() {
  const { id } = useParams();
  const n = id !== undefined && /^\d{1,15}$/.test(id) ? Number(id) : null;
  if (n === null) return <NotFoundRoute />;
  return <EventScreen key={n} eventId={n} />;
}
