import { QueryClient } from '@tanstack/react-query';
import { afterEach, describe, expect, it, vi } from 'vitest';
import { earlyRequestsFor } from '@client/app/early-requests';
import { preloadRouteData } from '@client/app/preload-route';
import { dropEarlyResponses } from '@client/lib/early-requests';
import { parseFilters } from '@client/api/queue/queue-filters';
import { defaultQueueFilters } from '@client/api/urls';

const analyst = { session: { user: { id: 'u1', email: 'a@kestrel.example', displayName: 'A', roles: ['analyst'], stationIds: [] }, mailbox: false } };

/**
 * The addresses the app itself asks for first on `pathname + search` (preload-route.ts, the same
 * query options the screens use), with the network answering the session and refusing the rest.
 */
async function appRequests(pathname: string, search: string): Promise<string[]> {
  const asked: string[] = [];
  vi.stubGlobal(
    'fetch',
    vi.fn((url: string) => {
      asked.push(url);
      const body = url === '/api/auth/session' ? analyst : { error: { code: 'unavailable', message: 'not in this test' } };
      return Promise.resolve(new Response(JSON.stringify(body), { status: url === '/api/auth/session' ? 200 : 503 }));
    }),
  );
  const qc = new QueryClient({ defaultOptions: { queries: { retry: false } } });
  await preloadRouteData(qc, { pathname, search });
  return asked;
}

afterEach(() => {
  dropEarlyResponses();
  vi.unstubAllGlobals();
});

describe('the requests started before the app loads', () => {
  it.each([
    ['/queue', ''],
    ['/queue', '?state=all&station=KV02&sort=newest'],
    ['/queue/items/42', ''],
    ['/queue/items/42', '?state=new&flag=likely+event'],
    ['/events/7', ''],
  ])('are exactly the addresses the app asks first on %s%s', async (pathname, search) => {
    const early = earlyRequestsFor({ pathname, search });
    // A filtered queue page is known once the filter parser has loaded; an unfiltered one at once.
    expect(early.later === null).toBe(search === '' || pathname.startsWith('/events/'));
    const urls = [...early.urls, ...((await early.later) ?? [])];
    const app = await appRequests(pathname, search);
    expect(app.length).toBeGreaterThan(1);
    // Every first request of the app finds its early answer (same address, character for character)…
    for (const url of app) expect(urls).toContain(url);
    // …and the early ones are the app's first requests, not guesses (the event's geometry is asked once the event has answered, which this network refuses).
    for (const url of urls) if (!url.endsWith('/geometry')) expect(app).toContain(url);
  });

  it('knows the filters of an unfiltered queue without the filter parser (the same as it gives for an empty query)', () => {
    expect(defaultQueueFilters()).toEqual(parseFilters(new URLSearchParams('')));
  });

  it('names the screen whose code to load, and asks nothing on the sign-in pages', () => {
    expect(earlyRequestsFor({ pathname: '/queue', search: '' }).screen).toBe('queue');
    expect(earlyRequestsFor({ pathname: '/queue/items/3', search: '' }).screen).toBe('item');
    expect(earlyRequestsFor({ pathname: '/events/3', search: '' }).screen).toBe('event');
    expect(earlyRequestsFor({ pathname: '/stations', search: '' })).toEqual({ screen: null, urls: ['/api/auth/session'], later: null });
    expect(earlyRequestsFor({ pathname: '/sign-in', search: '?next=%2Fqueue' })).toEqual({ screen: null, urls: [], later: null });
    expect(earlyRequestsFor({ pathname: '/reset-password', search: '' }).urls).toEqual([]);
  });
});
