import { authPagePaths } from '@shared/auth/links';
import { parseFilters } from '@client/api/queue/queue-filters';
import { apiUrls, EVENT_TRACE_POINTS, REVIEW_TRACE_POINTS } from '@client/api/urls';

/** The screens whose code and data the page starts fetching before the app has loaded. */
export type EarlyScreen = 'queue' | 'item' | 'event';

/** The screen a path opens (with the item's or the event's id), or null for any other page. */
export function screenAt(pathname: string): { screen: 'queue' } | { screen: 'item' | 'event'; id: number } | null {
  if (pathname === '/queue') return { screen: 'queue' };
  const item = /^\/queue\/items\/(\d{1,15})$/.exec(pathname);
  if (item) return { screen: 'item', id: Number(item[1]) };
  const event = /^\/events\/(\d{1,15})$/.exec(pathname);
  if (event) return { screen: 'event', id: Number(event[1]) };
  return null;
}

/**
 * What the screen at `location` asks for first: its screen (whose code to load) and the GET
 * addresses of its first requests, exactly as its query options spell them (api/urls.ts). The auth
 * pages ask for nothing; any other page only for the session. A visitor who is not signed in gets
 * 401s for these, which nobody takes (the app asks the session first and goes to sign in).
 * @param location the address the page opened at (window.location)
 */
export function earlyRequestsFor(location: { pathname: string; search: string }): { screen: EarlyScreen | null; urls: string[] } {
  const { pathname, search } = location;
  if (Object.values(authPagePaths).some((p) => pathname === p || pathname.startsWith(`${p}/`))) return { screen: null, urls: [] };
  const at = screenAt(pathname);
  const filters = () => parseFilters(new URLSearchParams(search));
  if (!at) return { screen: null, urls: [apiUrls.session] };
  if (at.screen === 'queue') return { screen: 'queue', urls: [apiUrls.session, apiUrls.me, apiUrls.queuePage(filters()), apiUrls.eventIndex] };
  const { id } = at;
  if (at.screen === 'item') {
    return {
      screen: 'item',
      urls: [apiUrls.session, apiUrls.me, apiUrls.item(id), apiUrls.itemTraces(id, null, null, REVIEW_TRACE_POINTS), apiUrls.itemMatches(id), apiUrls.queuePage(filters()), apiUrls.eventIndex],
    };
  }
  return { screen: 'event', urls: [apiUrls.session, apiUrls.event(id), apiUrls.eventTraces(id, EVENT_TRACE_POINTS), apiUrls.eventGeometry(id)] };
}

/**
 * Loads the code of `screen` (the router's lazy routes import these very modules, which load only
 * once); resolves with nothing when there is no such screen or the code failed to load (the router
 * then tries again and shows its own error).
 */
export function loadEarlyScreen(screen: EarlyScreen | null): Promise<void> {
  const loading = screen === 'queue' ? import('./routes/queue') : screen === 'item' ? import('./routes/queue-item') : screen === 'event' ? import('./routes/event') : null;
  return loading ? loading.then(() => undefined, () => undefined) : Promise.resolve();
}
