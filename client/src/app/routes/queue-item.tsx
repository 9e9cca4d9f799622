import { useParams } from 'react-router';
import { ReviewScreen } from '@client/features/review/components/review-screen';
import { NotFoundRoute } from './not-found';

/** /queue/items/:id: one item on the review screen. */
export function QueueItemRoute() {
  const { id } = useParams();
  const n = id !== undefined && /^\d{1,15}$/.test(id) ? Number(id) : null;
  if (n === null) return <NotFoundRoute />;
  return <ReviewScreen key={n} itemId={n} />;
}
