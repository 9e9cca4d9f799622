import { queryOptions, useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { z } from 'zod';
import type { Role } from '@shared/auth/roles';
import { adminUserSchema, invitationRowSchema, mailMessageSchema, mailSummarySchema, stationOptionSchema } from '@shared/auth/schemas';
import { apiRequest, noContent } from '@client/lib/api-client';
import { queryKeys } from '@client/lib/query-keys';

/** GET /api/admin/users */
export const usersQueryOptions = () => queryOptions({ queryKey: queryKeys.admin.users, queryFn: () => apiRequest(z.object({ users: z.array(adminUserSchema) }), '/api/admin/users').then((r) => r.users) });
/** GET /api/admin/invitations */
export const invitationsQueryOptions = () =>
  queryOptions({ queryKey: queryKeys.admin.invitations, queryFn: () => apiRequest(z.object({ invitations: z.array(invitationRowSchema) }), '/api/admin/invitations').then((r) => r.invitations) });
/** GET /api/admin/stations */
export const stationOptionsQueryOptions = () =>
  queryOptions({ queryKey: queryKeys.admin.stations, queryFn: () => apiRequest(z.object({ stations: z.array(stationOptionSchema) }), '/api/admin/stations').then((r) => r.stations), staleTime: 300_000 });

/** Every user. */
export const useUsers = () => useQuery(usersQueryOptions());
/** Every invitation. */
export const useInvitations = () => useQuery(invitationsQueryOptions());
/** Every station, for assignment. */
export const useStationOptions = () => useQuery(stationOptionsQueryOptions());

/** The body of POST /api/admin/invitations. */
export type InviteInput = { email: string; displayName: string; roles: Role[]; stationIds: number[] };

/** POST /api/admin/invitations: mails a one-time link. */
export function useInvite() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: InviteInput) => apiRequest(z.object({ invitation: invitationRowSchema }), '/api/admin/invitations', { method: 'POST', body: input }),
    onSuccess: () => qc.invalidateQueries({ queryKey: queryKeys.admin.all }),
  });
}

/** DELETE /api/admin/invitations/:id */
export function useRevokeInvitation() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (id: number) => apiRequest(noContent, `/api/admin/invitations/${id}`, { method: 'DELETE' }),
    onSuccess: () => qc.invalidateQueries({ queryKey: queryKeys.admin.invitations }),
  });
}

/** PUT roles and stations of a user (roles first: that ends their sessions). */
export function useSetAccess() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: async (input: { userId: string; roles?: Role[]; stationIds?: number[] }) => {
      const id = encodeURIComponent(input.userId);
      if (input.roles) await apiRequest(noContent, `/api/admin/users/${id}/roles`, { method: 'PUT', body: { roles: input.roles } });
      if (input.stationIds) await apiRequest(noContent, `/api/admin/users/${id}/stations`, { method: 'PUT', body: { stationIds: input.stationIds } });
    },
    onSuccess: () => qc.invalidateQueries({ queryKey: queryKeys.admin.users }),
  });
}

/** POST /api/admin/users/:id/deactivate or /reactivate */
export function useSetActive() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: { userId: string; active: boolean }) =>
      apiRequest(noContent, `/api/admin/users/${encodeURIComponent(input.userId)}/${input.active ? 'reactivate' : 'deactivate'}`, { method: 'POST' }),
    onSuccess: () => qc.invalidateQueries({ queryKey: queryKeys.admin.users }),
  });
}

/** Mailbox page size. */
export const mailboxPageSize = 25;

/** GET /api/admin/mailbox?offset= */
export function useMailbox(offset: number) {
  return useQuery({
    queryKey: queryKeys.admin.mailbox(offset),
    queryFn: () => apiRequest(z.object({ messages: z.array(mailSummarySchema), total: z.number() }), '/api/admin/mailbox', { query: { limit: mailboxPageSize, offset } }),
    refetchInterval: 10_000,
  });
}

/** GET /api/admin/mailbox/:id */
export function useMailMessage(id: number | null) {
  return useQuery({
    queryKey: queryKeys.admin.message(id ?? 0),
    enabled: id !== null,
    queryFn: () => apiRequest(z.object({ message: mailMessageSchema }), `/api/admin/mailbox/${id ?? 0}`).then((r) => r.message),
  });
}
