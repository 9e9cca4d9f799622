import { authPagePaths } from '@shared/auth/links';
import { apiUrls, defaultQueueFilters, EVENT_TRACE_POINTS, REVIEW_TRACE_POINTS } from '@client/api/urls';

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

/** The first requests of a screen: `urls` at once; `later`, those known only once more code has loaded. */
export type EarlyRequests = { screen: EarlyScreen | null; urls: string[]; later: Promise<string[]> | null };

/**
 * What the screen at `location` asks for first: its screen (whose code to load) and the GET
 * addresses of its first requests, exactly as its query options spell them (api/urls.ts). The auth
 * pages ask for nothing; any other page only for the session. A visitor who is not signed in gets
 * 401s for these, which nobody takes (the app asks the session first and goes to sign in).
 *
 * This runs in the page's first module, which loads nothing heavy: the queue page of an address
 * with filters in its search params needs the filter parser (built on zod), so that one address
 * comes in `later`, once the parser has loaded; without filters it is known at once.
 * @param location the address the page opened at (window.location)
 */
export function earlyRequestsFor(location: { pathname: string; search: string }): EarlyRequests {
  const { pathname, search } = location;
  if (Object.values(authPagePaths).some((p) => pathname === p || pathname.startsWith(`${p}/`))) return { screen: null, urls: [], later: null };
  const at = screenAt(pathname);
  if (!at) return { screen: null, urls: [apiUrls.session], later: null };
  if (at.screen === 'event') {
    const { id } = at;
    return { screen: 'event', urls: [apiUrls.session, apiUrls.event(id), apiUrls.eventTraces(id, EVENT_TRACE_POINTS), apiUrls.eventGeometry(id)], later: null };
  }
  const filtered = search !== '' && search !== '?';
  const queuePage = filtered ? [] : [apiUrls.queuePage(defaultQueueFilters())];
  const later = filtered ? import('@client/api/queue/queue-filters').then((m) => [apiUrls.queuePage(m.parseFilters(new URLSearchParams(search)))]) : null;
  if (at.screen === 'queue') return { screen: 'queue', urls: [apiUrls.session, apiUrls.me, ...queuePage, apiUrls.eventIndex], later };
  const { id } = at;
  return {
    screen: 'item',
    urls: [apiUrls.session, apiUrls.me, apiUrls.item(id), apiUrls.itemTraces(id, null, null, REVIEW_TRACE_POINTS), apiUrls.itemMatches(id), ...queuePage, apiUrls.eventIndex],
    later,
  };
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
