import { queryOptions, useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { z } from 'zod';
import { lazySchema } from '@shared/schemas/lazy-schema';
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
import { apiRequest } from '@client/lib/api-client';
import { queryKeys } from '@client/lib/query-keys';

/** A station with its profile parsed. */
export const stationDetailClientSchema = lazySchema(() => stationDetailSchema.extend({ profile: processingProfileSchema }));

/** GET /api/stations. */
export const stationsQuery = () =>
  queryOptions({ queryKey: queryKeys.stations.all, queryFn: () => apiRequest(z.object({ stations: z.array(stationSummarySchema) }), '/api/stations') });

/** GET /api/stations/:id. */
export const stationQuery = (id: number) =>
  queryOptions({
    queryKey: queryKeys.stations.detail(id),
    queryFn: () => apiRequest(z.object({ station: stationDetailClientSchema, baseline: baselineViewSchema }), `/api/stations/${id}`),
  });

/** The health answer (server/features/stations/station-health.ts StationHealth). */
export const stationHealthSchema = lazySchema(() =>
  z.object({
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
  }),
);

/** The health of a station. */
export type StationHealthView = z.infer<typeof stationHealthSchema>;

/** GET /api/stations/:id/health. */
export const stationHealthQuery = (id: number, days = 30) =>
  queryOptions({ queryKey: queryKeys.stations.health(id, days), queryFn: () => apiRequest(stationHealthSchema, `/api/stations/${id}/health?days=${days}`) });

/** GET /api/stations/:id/tokens. */
export const stationTokensQuery = (id: number) =>
  queryOptions({ queryKey: queryKeys.stations.tokens(id), queryFn: () => apiRequest(z.object({ tokens: z.array(tokenViewSchema) }), `/api/stations/${id}/tokens`) });

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
    mutationFn: (profile: ProcessingProfile) => apiRequest(z.object({ profile: processingProfileSchema }), `/api/stations/${id}/profile`, { method: 'PUT', body: profile }),
    onSuccess: () => qc.invalidateQueries({ queryKey: queryKeys.stations.detail(id) }),
  });
}

/** PATCH /api/stations/:id. */
export function useUpdateStation(id: number) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (patch: StationUpdateInput) => apiRequest(z.object({ station: stationDetailClientSchema }), `/api/stations/${id}`, { method: 'PATCH', body: patch }),
    onSuccess: () => qc.invalidateQueries({ queryKey: queryKeys.stations.all }),
  });
}

/** POST /api/stations/:id/tokens: the answer holds the secret, shown once. */
export function useCreateToken(id: number) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (label: string) => apiRequest(tokenCreatedSchema, `/api/stations/${id}/tokens`, { method: 'POST', body: { label } }),
    onSuccess: () => qc.invalidateQueries({ queryKey: queryKeys.stations.tokens(id) }),
  });
}

/** POST /api/stations/:id/tokens/:tokenId/revoke. */
export function useRevokeToken(id: number) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (tokenId: number) => apiRequest(z.object({ token: tokenViewSchema }), `/api/stations/${id}/tokens/${tokenId}/revoke`, { method: 'POST' }),
    onSuccess: () => qc.invalidateQueries({ queryKey: queryKeys.stations.tokens(id) }),
  });
}

/** The signed-in user's roles and stations (GET /api/auth/me), for hiding controls with the shared policy. */
export const meSchema = lazySchema(() => z.object({ user: z.object({ roles: z.array(roleSchema), stationIds: z.array(z.number()) }) }));

/** Hook: who is signed in (roles and assigned stations); only used to hide controls, the server decides. */
export const useMe = () => useQuery({ queryKey: queryKeys.stations.me, queryFn: () => apiRequest(meSchema, '/api/auth/me'), staleTime: 60_000, retry: false });
