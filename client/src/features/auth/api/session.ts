import { queryOptions, useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { z } from 'zod';
import { lazySchema } from '@shared/schemas/lazy-schema';
import { roleSchema } from '@shared/auth/roles';
import { meSchema, type Me } from '@shared/auth/schemas';
import { apiUrls } from '@client/api/urls';
import { ApiError, apiRequest, noContent } from '@client/lib/api-client';
import { dropEarlyResponses } from '@client/lib/early-requests';
import { queryKeys } from '@client/lib/query-keys';

/**
 * GET /api/auth/session: the signed-in user, or null when nobody is or the server cannot say (no
 * API behind a static build): the app then shows itself signed out.
 */
export async function fetchMe(): Promise<Me | null> {
  try {
    return (await apiRequest(z.object({ session: meSchema.nullable() }), apiUrls.session, { allowUnauthenticated: true })).session;
  } catch (err) {
    if (err instanceof ApiError) return null;
    throw err;
  }
}

/** Query options of the signed-in user (refetched on focus so a session ended elsewhere shows). */
export const meQueryOptions = () => queryOptions({ queryKey: queryKeys.session, queryFn: fetchMe, staleTime: 60_000, refetchOnWindowFocus: true, retry: false });

/** The signed-in user (undefined while loading, null when signed out). */
export function useMe() {
  return useQuery(meQueryOptions());
}

/**
 * After signing in or out: drops every cached answer of the previous person except the session
 * query itself (whose observer must stay attached), then stores the new session.
 */
async function switchPerson(qc: ReturnType<typeof useQueryClient>, me: Me | null | 'refetch'): Promise<void> {
  qc.removeQueries({ predicate: (q) => q.queryKey[0] !== queryKeys.session[0] || q.queryKey[1] !== queryKeys.session[1] });
  dropEarlyResponses();
  qc.setQueryData(queryKeys.session, me === 'refetch' ? await fetchMe() : me);
}

/** POST /api/auth/sign-in; on success the session query is refetched. */
export function useSignIn() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: { email: string; password: string }) => apiRequest(noContent, '/api/auth/sign-in', { method: 'POST', body: input, allowUnauthenticated: true }),
    onSuccess: () => switchPerson(qc, 'refetch'),
  });
}

/** POST /api/auth/sign-out; drops every cached answer. */
export function useSignOut() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: () => apiRequest(noContent, '/api/auth/sign-out', { method: 'POST', allowUnauthenticated: true }),
    onSettled: () => switchPerson(qc, null),
  });
}

const messageSchema = lazySchema(() => z.object({ message: z.string() }));

/** POST /api/auth/forgot-password: always the same answer whether the account exists or not. */
export function useForgotPassword() {
  return useMutation({ mutationFn: (input: { email: string }) => apiRequest(messageSchema, '/api/auth/forgot-password', { method: 'POST', body: input, allowUnauthenticated: true }) });
}

/** What a reset link is for. */
export const resetCheckSchema = lazySchema(() => z.object({ email: z.string(), expiresAt: z.string() }));
/** What an invitation link offers. */
export const invitationCheckSchema = lazySchema(() => z.object({ email: z.string(), displayName: z.string(), roles: z.array(roleSchema), expiresAt: z.string() }));

/** POST /api/auth/reset-password/check or /api/auth/invitations/check for a fragment token. */
export function useTokenCheck<S extends z.ZodType>(kind: 'reset' | 'invitation', schema: S, token: string | null) {
  return useQuery({
    queryKey: queryKeys.tokenCheck(kind, token),
    enabled: token !== null,
    retry: false,
    staleTime: Infinity,
    queryFn: () => apiRequest(schema, kind === 'reset' ? '/api/auth/reset-password/check' : '/api/auth/invitations/check', { method: 'POST', body: { token }, allowUnauthenticated: true }),
  });
}

/** POST /api/auth/reset-password or /api/auth/invitations/accept; signs the person in. */
export function useSetPassword(kind: 'reset' | 'invitation') {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: { token: string; password: string; displayName?: string }) =>
      apiRequest(noContent, kind === 'reset' ? '/api/auth/reset-password' : '/api/auth/invitations/accept', { method: 'POST', body: input, allowUnauthenticated: true }),
    onSuccess: () => switchPerson(qc, 'refetch'),
  });
}
