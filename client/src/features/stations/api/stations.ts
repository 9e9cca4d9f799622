import { queryOptions, useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { z } from 'zod';
import { apiErrorBodySchema } from '@shared/api-error';
import { roleSchema } from '@shared/auth/roles';
import { flagSchema } from '@shared/schemas/flags';
import { itemStateSchema } from '@shared/schemas/item-states';
import { processingProfileSchema, type ProcessingProfile } from '@shared/schemas/processing-profile';
import {
  baselineViewSchema,
  stationDetailSchema,
  stationSummarySchema,
  tokenCreatedSchema,
  tokenViewSchema,
  type StationUpdateInput,
} from '@shared/schemas/station';

/** An API answer other than 2xx, with the server's message and field issues (if any). */
export class StationApiError extends Error {
  override readonly name = 'StationApiError';
  constructor(
    readonly status: number,
    readonly code: string,
    message: string,
    /** Field-level problems: `path` is dotted, e.g. `profile.bands.high.fmax`. */
    readonly issues: Array<{ path: string; message: string }>,
  ) {
    super(message);
  }
}

const issuesSchema = z.object({ issues: z.array(z.object({ path: z.string(), message: z.string() })) });

/** JSON request to the API, parsed with `schema`; non-2xx throws StationApiError. */
export async function stationFetch<S extends z.ZodType>(schema: S, path: string, init: { method?: string; body?: unknown } = {}): Promise<z.infer<S>> {
  const res = await fetch(path, {
    method: init.method ?? 'GET',
    credentials: 'same-origin',
    headers: init.body === undefined ? { Accept: 'application/json' } : { Accept: 'application/json', 'Content-Type': 'application/json' },
    body: init.body === undefined ? undefined : JSON.stringify(init.body),
  });
  const json: unknown = res.status === 204 ? null : await res.json().catch(() => null);
  if (!res.ok) {
    const err = apiErrorBodySchema.safeParse(json);
    if (err.success) {
      const issues = issuesSchema.safeParse(err.data.error.details);
      throw new StationApiError(res.status, err.data.error.code, err.data.error.message, issues.success ? issues.data.issues : []);
    }
    throw new StationApiError(res.status, 'http_error', `The server answered ${res.status}`, []);
  }
  const parsed = schema.safeParse(json);
  if (!parsed.success) throw new StationApiError(500, 'bad_response', `Unexpected answer from ${path}`, []);
  return parsed.data;
}

/** A station with its profile parsed. */
export const stationDetailClientSchema = stationDetailSchema.extend({ profile: processingProfileSchema });

/** GET /api/stations. */
export const stationsQuery = () =>
  queryOptions({ queryKey: ['stations'], queryFn: () => stationFetch(z.object({ stations: z.array(stationSummarySchema) }), '/api/stations') });

/** GET /api/stations/:id. */
export const stationQuery = (id: number) =>
  queryOptions({
    queryKey: ['stations', id],
    queryFn: () => stationFetch(z.object({ station: stationDetailClientSchema, baseline: baselineViewSchema }), `/api/stations/${id}`),
  });

/** The health answer (server/features/stations/station-health.ts StationHealth). */
export const stationHealthSchema = z.object({
  psd: z.array(
    z.object({
      streamId: z.string(),
      windowId: z.number(),
      windowStart: z.string(),
      freqs: z.array(z.number()),
      db: z.array(z.number().nullable()),
      physical: z.boolean(),
      units: z.string(),
      nlnm: z.array(z.number().nullable()),
      nhnm: z.array(z.number().nullable()),
    }),
  ),
  noiseModels: z.object({ freqs: z.array(z.number()), nlnm: z.array(z.number().nullable()), nhnm: z.array(z.number().nullable()) }),
  trend: z.array(z.object({ windowStart: z.string(), db: z.number().nullable(), units: z.string().nullable(), flag: z.string(), channel: z.string() })),
  qc: z.array(z.object({ windowId: z.number(), windowStart: z.string(), streamId: z.string(), code: z.string(), severity: z.string(), message: z.string() })),
  baseline: baselineViewSchema,
  items: z.array(z.object({ id: z.number(), state: itemStateSchema, flag: flagSchema, score: z.number(), windowStart: z.string() })),
  days: z.number(),
});

/** The health of a station. */
export type StationHealthView = z.infer<typeof stationHealthSchema>;

/** GET /api/stations/:id/health. */
export const stationHealthQuery = (id: number, days = 30) =>
  queryOptions({ queryKey: ['stations', id, 'health', days], queryFn: () => stationFetch(stationHealthSchema, `/api/stations/${id}/health?days=${days}`) });

/** GET /api/stations/:id/tokens. */
export const stationTokensQuery = (id: number) =>
  queryOptions({ queryKey: ['stations', id, 'tokens'], queryFn: () => stationFetch(z.object({ tokens: z.array(tokenViewSchema) }), `/api/stations/${id}/tokens`) });

/** Hook: the station list. */
export const useStations = () => useQuery(stationsQuery());
/** Hook: one station. */
export const useStation = (id: number) => useQuery(stationQuery(id));
/** Hook: a station's health. */
export const useStationHealth = (id: number) => useQuery(stationHealthQuery(id));
/** Hook: a station's tokens (only for people who manage them). */
export const useStationTokens = (id: number, enabled: boolean) => useQuery({ ...stationTokensQuery(id), enabled });

/** PUT /api/stations/:id/profile; refreshes the station. */
export function useSaveProfile(id: number) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (profile: ProcessingProfile) => stationFetch(z.object({ profile: processingProfileSchema }), `/api/stations/${id}/profile`, { method: 'PUT', body: profile }),
    onSuccess: () => qc.invalidateQueries({ queryKey: ['stations', id] }),
  });
}

/** PATCH /api/stations/:id. */
export function useUpdateStation(id: number) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (patch: StationUpdateInput) => stationFetch(z.object({ station: stationDetailClientSchema }), `/api/stations/${id}`, { method: 'PATCH', body: patch }),
    onSuccess: () => qc.invalidateQueries({ queryKey: ['stations'] }),
  });
}

/** POST /api/stations/:id/tokens: the answer holds the secret, shown once. */
export function useCreateToken(id: number) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (label: string) => stationFetch(tokenCreatedSchema, `/api/stations/${id}/tokens`, { method: 'POST', body: { label } }),
    onSuccess: () => qc.invalidateQueries({ queryKey: ['stations', id, 'tokens'] }),
  });
}

/** POST /api/stations/:id/tokens/:tokenId/revoke. */
export function useRevokeToken(id: number) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (tokenId: number) => stationFetch(z.object({ token: tokenViewSchema }), `/api/stations/${id}/tokens/${tokenId}/revoke`, { method: 'POST' }),
    onSuccess: () => qc.invalidateQueries({ queryKey: ['stations', id, 'tokens'] }),
  });
}

/** The signed-in user's roles and stations (GET /api/auth/me), for hiding controls with the shared policy. */
export const meSchema = z.object({ user: z.object({ roles: z.array(roleSchema), stationIds: z.array(z.number()) }) });

/** Hook: who is signed in (roles and assigned stations); only used to hide controls, the server decides. */
export const useMe = () => useQuery({ queryKey: ['stations', 'me'], queryFn: () => stationFetch(meSchema, '/api/auth/me'), staleTime: 60_000, retry: false });
