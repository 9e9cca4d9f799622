/**
 * Answers asked for before the app's code has loaded (client/src/early.ts starts them while the
 * browser is still fetching and running the app's code, a few hundred milliseconds on a slow
 * machine), kept here until the app's own request for the identical address takes them. Each answer
 * is taken once, and only while fresh; anything else goes to the network as usual.
 */

/** How long an early answer may wait for its request, ms: older ones are dropped, never served. */
export const EARLY_ANSWER_TTL_MS = 10_000;

type Early = { at: number; response: Promise<Response> };
const pending = new Map<string, Early>();

/** The headers every GET of the API client sends (lib/api-client.ts), so the two requests are the same. */
export const apiGetHeaders: Readonly<Record<string, string>> = { Accept: 'application/json' };

/**
 * Starts a GET of each address (same-origin cookie, the API client's headers) unless one is already
 * waiting. A failed request leaves nothing behind, so the app asks again itself.
 * @param urls same-origin addresses, exactly as the app's requests spell them
 * @param now the clock, ms (tests pass their own)
 */
export function startEarlyRequests(urls: readonly string[], fetchFn: typeof fetch = fetch, now: number = Date.now()): void {
  for (const url of urls) {
    if (pending.has(url)) continue;
    const response = fetchFn(url, { method: 'GET', credentials: 'same-origin', headers: apiGetHeaders });
    response.catch(() => {
      if (pending.get(url)?.response === response) pending.delete(url);
    });
    pending.set(url, { at: now, response });
  }
}

/**
 * The early answer for `url`, removed as it is taken; undefined when there is none or it has waited
 * longer than EARLY_ANSWER_TTL_MS (then it is dropped).
 * @param now the clock, ms
 */
export function takeEarlyResponse(url: string, now: number = Date.now()): Promise<Response> | undefined {
  const early = pending.get(url);
  if (!early) return undefined;
  pending.delete(url);
  return now - early.at <= EARLY_ANSWER_TTL_MS ? early.response : undefined;
}

/** Drops every waiting answer (sign-in and sign-out: an answer asked as somebody else is never served). */
export function dropEarlyResponses(): void {
  pending.clear();
}
