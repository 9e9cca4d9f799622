import { DashboardScreen } from '@client/features/supervisor/components/dashboard-screen';
import { InboxScreen } from '@client/features/supervisor/components/inbox-screen';
import { ReviewScreen } from '@client/features/supervisor/components/review-screen';
import { ThresholdsScreen } from '@client/features/supervisor/components/thresholds-screen';

/** /inbox: escalations for the signed-in supervisor. */
export function InboxRoute() {
  return <InboxScreen />;
}

/** /review: labelled events, candidate events and the catalogue export. */
export function ReviewRoute() {
  return <ReviewScreen />;
}

/** /thresholds: per-station thresholds against labelled history. */
export function ThresholdsRoute() {
  return <ThresholdsScreen />;
}

/** /dashboard: the network's triage at a glance. */
export function DashboardRoute() {
  return <DashboardScreen />;
}
