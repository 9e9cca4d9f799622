import { queryOptions, useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { z } from 'zod';
import { sessionRowSchema } from '@shared/auth/schemas';
import { apiRequest, noContent } from '@client/lib/api-client';
import { queryKeys } from '@client/lib/query-keys';

/** GET /api/account/sessions */
export const sessionsQueryOptions = () =>
  queryOptions({ queryKey: queryKeys.account.sessions, queryFn: () => apiRequest(z.object({ sessions: z.array(sessionRowSchema) }), '/api/account/sessions').then((r) => r.sessions) });

/** Your sessions, newest first. */
export function useSessions() {
  return useQuery(sessionsQueryOptions());
}

/** DELETE /api/account/sessions/:id (one) or /api/account/sessions (all but this one). */
export function useEndSessions() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (which: { id: string } | 'others') => apiRequest(noContent, which === 'others' ? '/api/account/sessions' : `/api/account/sessions/${which.id}`, { method: 'DELETE' }),
    onSuccess: () => qc.invalidateQueries({ queryKey: queryKeys.account.sessions }),
  });
}

/** PUT /api/account/password; your other sessions end. */
export function useChangePassword() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: { currentPassword: string; newPassword: string }) => apiRequest(noContent, '/api/account/password', { method: 'PUT', body: input }),
    onSuccess: () => qc.invalidateQueries({ queryKey: queryKeys.account.sessions }),
  });
}
