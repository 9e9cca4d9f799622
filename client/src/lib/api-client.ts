import { z } from 'zod';
import { lazySchema } from '@shared/schemas/lazy-schema';
import { apiErrorBodySchema } from '@shared/api-error';
import { apiGetHeaders, takeEarlyResponse } from './early-requests';

/** Field-level problems the server lists in `details.issues` (dotted paths). */
export type FieldIssue = { path: string; message: string };

/** Any API answer other than 2xx: status, the stable code, the server's words and field issues. */
export class ApiError extends Error {
  override readonly name = 'ApiError';
  constructor(
    readonly status: number,
    readonly code: string,
    message: string,
    readonly details?: unknown,
    readonly issues: FieldIssue[] = [],
  ) {
    super(message);
  }
}

const issuesSchema = lazySchema(() => z.object({ issues: z.array(z.object({ path: z.string(), message: z.string() })) }));

type UnauthenticatedHandler = (path: string) => void;

/** Default: go to the sign-in page and come back here afterwards. */
let onUnauthenticated: UnauthenticatedHandler = () => {
  const here = `${window.location.pathname}${window.location.search}`;
  if (window.location.pathname !== '/sign-in') window.location.assign(`/sign-in?next=${encodeURIComponent(here)}`);
};

/**
 * Replaces what happens when a request answers 401 (the session provider uses it to clear the
 * session and navigate in-app instead of reloading).
 */
export function setUnauthenticatedHandler(handler: UnauthenticatedHandler): void {
  onUnauthenticated = handler;
}

/** Options of one API request. */
export type ApiRequest = {
  method?: 'GET' | 'POST' | 'PUT' | 'PATCH' | 'DELETE';
  /** JSON body (objects) or a FormData for multipart. */
  body?: unknown;
  query?: Record<string, string | number | undefined>;
  signal?: AbortSignal;
  /** A 401 is an answer the caller handles (sign-in form, /me probe): no redirect. */
  allowUnauthenticated?: boolean;
};

function withQuery(path: string, query: ApiRequest['query']): string {
  if (!query) return path;
  const params = new URLSearchParams();
  for (const [k, v] of Object.entries(query)) if (v !== undefined && v !== '') params.set(k, String(v));
  const qs = params.toString();
  return qs ? `${path}?${qs}` : path;
}

/**
 * The one API client: JSON in and out (same-origin cookie), answers parsed with `schema`
 * (`null` for 204), errors in the one shape of shared/api-error.ts thrown as ApiError, and a 401
 * sends the person to sign in (unless `allowUnauthenticated`).
 */
export async function apiRequest<S extends z.ZodType>(schema: S, path: string, req: ApiRequest = {}): Promise<z.infer<S>> {
  const body: BodyInit | undefined = req.body === undefined ? undefined : req.body instanceof FormData ? req.body : JSON.stringify(req.body);
  const headers: Record<string, string> = { ...apiGetHeaders };
  if (typeof body === 'string') headers['Content-Type'] = 'application/json';
  const url = withQuery(path, req.query);
  const method = req.method ?? 'GET';
  let res: Response;
  try {
    // A GET the page started before the app's code had loaded (early-requests.ts) is answered by that request.
    const early = method === 'GET' && body === undefined ? takeEarlyResponse(url) : undefined;
    res = await (early ?? fetch(url, { method, credentials: 'same-origin', headers, body, signal: req.signal }));
  } catch (err) {
    if (err instanceof DOMException && err.name === 'AbortError') throw err;
    throw new ApiError(0, 'network_error', 'Seisift’s server cannot be reached; check the connection and try again');
  }
  const json: unknown = res.status === 204 ? null : await res.json().catch(() => null);
  if (!res.ok) {
    const parsed = apiErrorBodySchema.safeParse(json);
    const error = parsed.success
      ? new ApiError(res.status, parsed.data.error.code, parsed.data.error.message, parsed.data.error.details, issuesSchema.safeParse(parsed.data.error.details).data?.issues ?? [])
      : new ApiError(res.status, 'http_error', `The server answered ${res.status} for ${path}`);
    if (res.status === 401 && !req.allowUnauthenticated) onUnauthenticated(path);
    throw error;
  }
  const answer = schema.safeParse(json);
  if (!answer.success) {
    const issue = answer.error.issues[0];
    throw new ApiError(500, 'bad_response', `Unexpected answer from ${path} (${issue?.path.join('.') ?? ''}: ${issue?.message ?? ''})`);
  }
  return answer.data;
}

/** Schema for answers without a body (204) or whose body is not used. */
export const noContent = lazySchema(() => z.unknown());
