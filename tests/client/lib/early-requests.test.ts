import { afterEach, describe, expect, it, vi } from 'vitest';
import { z } from 'zod';
import { apiRequest } from '@client/lib/api-client';
import { dropEarlyResponses, EARLY_ANSWER_TTL_MS, startEarlyRequests, takeEarlyResponse } from '@client/lib/early-requests';

const json = (body: unknown, status = 200) => new Response(JSON.stringify(body), { status, headers: { 'Content-Type': 'application/json' } });

afterEach(() => {
  dropEarlyResponses();
  vi.unstubAllGlobals();
});

describe('early answers', () => {
  it('are asked once per address, with the API client’s headers and the cookie, and taken once', async () => {
    const fetchFn = vi.fn((_url: string | URL | Request, _init?: RequestInit) => Promise.resolve(json({ ok: 1 })));
    startEarlyRequests(['/api/a', '/api/a', '/api/b'], fetchFn, 0);
    expect(fetchFn.mock.calls.map((c) => c[0])).toEqual(['/api/a', '/api/b']);
    expect(fetchFn.mock.calls[0]?.[1]).toMatchObject({ method: 'GET', credentials: 'same-origin', headers: { Accept: 'application/json' } });
    const first = takeEarlyResponse('/api/a', 5);
    expect(first).toBeDefined();
    expect(await (await first)?.json()).toEqual({ ok: 1 });
    expect(takeEarlyResponse('/api/a', 6)).toBeUndefined();
    // Another address is not an answer for this one.
    expect(takeEarlyResponse('/api/b?x=1', 6)).toBeUndefined();
  });

  it('are never served once older than the limit, nor after a person switch', () => {
    const fetchFn = vi.fn(() => Promise.resolve(json({})));
    startEarlyRequests(['/api/old', '/api/other'], fetchFn, 1000);
    expect(takeEarlyResponse('/api/old', 1000 + EARLY_ANSWER_TTL_MS + 1)).toBeUndefined();
    dropEarlyResponses();
    expect(takeEarlyResponse('/api/other', 1001)).toBeUndefined();
  });

  it('leave nothing behind when the request fails, so the app asks again itself', async () => {
    const fetchFn = vi.fn(() => Promise.reject(new TypeError('offline')));
    startEarlyRequests(['/api/down'], fetchFn, Date.now());
    await new Promise((r) => setTimeout(r, 0));
    expect(takeEarlyResponse('/api/down')).toBeUndefined();
  });

  it('answer the API client’s GET for the identical address, and only a GET', async () => {
    const network = vi.fn(() => Promise.resolve(json({ n: 'network' })));
    vi.stubGlobal('fetch', network);
    startEarlyRequests(['/api/thing?limit=5'], () => Promise.resolve(json({ n: 'early' })));
    const schema = z.object({ n: z.string() });
    expect(await apiRequest(schema, '/api/thing', { query: { limit: 5 } })).toEqual({ n: 'early' });
    expect(network).not.toHaveBeenCalled();
    // Taken: the next request goes to the network.
    expect(await apiRequest(schema, '/api/thing', { query: { limit: 5 } })).toEqual({ n: 'network' });
    startEarlyRequests(['/api/thing'], () => Promise.resolve(json({ n: 'early' })));
    expect(await apiRequest(schema, '/api/thing', { method: 'POST', body: {} })).toEqual({ n: 'network' });
  });

  it('go through the API client’s error handling like any answer', async () => {
    vi.stubGlobal('fetch', vi.fn(() => Promise.resolve(json({}))));
    startEarlyRequests(['/api/gone'], () => Promise.resolve(json({ error: { code: 'not_found', message: 'no such item' } }, 404)));
    await expect(apiRequest(z.object({}), '/api/gone')).rejects.toMatchObject({ status: 404, code: 'not_found' });
  });
});
