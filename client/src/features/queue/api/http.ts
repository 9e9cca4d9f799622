import { z } from 'zod';
import { apiErrorBodySchema } from '../../../../../shared/api-error';

/** An API answer other than 2xx: status, stable code and the server's message. */
export class QueueApiError extends Error {
  override readonly name = 'QueueApiError';
  constructor(
    readonly status: number,
    readonly code: string,
    message: string,
    readonly details?: unknown,
  ) {
    super(message);
  }
}

/**
 * Fetches JSON from the API and parses it with `schema`. Non-2xx answers throw QueueApiError with
 * the server's message (e.g. the 409 naming who changed an item); a body that fails the schema
 * throws too, naming the path.
 */
export async function fetchJson<S extends z.ZodType>(schema: S, path: string, init: { method?: 'GET' | 'POST'; body?: unknown; signal?: AbortSignal } = {}): Promise<z.infer<S>> {
  const res = await fetch(path, {
    method: init.method ?? 'GET',
    credentials: 'same-origin',
    headers: init.body === undefined ? { Accept: 'application/json' } : { Accept: 'application/json', 'Content-Type': 'application/json' },
    body: init.body === undefined ? undefined : JSON.stringify(init.body),
    signal: init.signal,
  });
  const json: unknown = await res.json().catch(() => null);
  if (!res.ok) {
    const err = apiErrorBodySchema.safeParse(json);
    if (err.success) throw new QueueApiError(res.status, err.data.error.code, err.data.error.message, err.data.error.details);
    throw new QueueApiError(res.status, 'http_error', `${path}: the server answered ${res.status}`);
  }
  const parsed = schema.safeParse(json);
  if (!parsed.success) throw new QueueApiError(500, 'bad_response', `${path}: unexpected answer (${parsed.error.issues[0]?.path.join('.') ?? ''}: ${parsed.error.issues[0]?.message ?? ''})`);
  return parsed.data;
}
