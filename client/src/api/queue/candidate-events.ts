import { queryOptions, useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { z } from 'zod';
import { lazySchema } from '@shared/schemas/lazy-schema';
import { candidateEventSchema as sharedCandidateEventSchema, candidateMemberSchema as sharedCandidateMemberSchema, groupLabelResultSchema as sharedGroupLabelResultSchema, type groupLabelBodySchema } from '@shared/schemas/supervisor';
import { apiRequest } from '@client/lib/api-client';
import { queryKeys } from '@client/lib/query-keys';

/** One member of a candidate event as GET /api/supervisor/candidate-events/:id sends it (shared with the server). */
export const candidateMemberSchema = sharedCandidateMemberSchema;

/** A candidate event member. */
export type CandidateMember = z.infer<typeof candidateMemberSchema>;

/** A candidate event with the members the viewer may see (shared with the server). */
export const candidateEventSchema = sharedCandidateEventSchema;

/** A candidate event. */
export type CandidateEvent = z.infer<typeof candidateEventSchema>;

/** Query options of GET /api/supervisor/candidate-events/:id (policy: queue.view). */
export function candidateEventOptions(id: number) {
  return queryOptions({ queryKey: queryKeys.queue.candidateEvent(id), queryFn: ({ signal }) => apiRequest(candidateEventSchema, `/api/supervisor/candidate-events/${id}`, { signal }), staleTime: 30_000 });
}

/** One candidate event, or nothing while `id` is null. */
export function useCandidateEvent(id: number | null) {
  return useQuery({ ...candidateEventOptions(id ?? 0), enabled: id !== null });
}

const groupLabelResultSchema = sharedGroupLabelResultSchema;

/** The body of a group label: the event type for every member, the whole label for the current one. */
export type GroupLabelBodyInput = z.input<typeof groupLabelBodySchema>;

/** What labelling a group did to each member. */
export type GroupLabelResult = z.infer<typeof groupLabelResultSchema>;

/**
 * Labels every member of a candidate event (POST /api/supervisor/candidate-events/:id/label,
 * policy queue.label) with the event type only, the current item with its whole label; members
 * already settled or claimed by someone else are skipped with a reason. Every queue query is refetched afterwards (each member's row changed).
 */
export function useLabelGroup() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: ({ eventId, body }: { eventId: number; body: GroupLabelBodyInput }) =>
      apiRequest(groupLabelResultSchema, `/api/supervisor/candidate-events/${eventId}/label`, { method: 'POST', body }),
    onSettled: () => qc.invalidateQueries({ queryKey: queryKeys.queue.all }),
  });
}

/** The supervisor's review note of an item (GET /api/supervisor/items/:id/review-note, policy queue.view). */
export const reviewNoteSchema = lazySchema(() =>
  z.object({
    note: z
      .object({
        evaluationStatus: z.string().nullable(),
        comment: z.string().nullable(),
        returnComment: z.string().nullable(),
        returnedBy: z.string().nullable(),
        returnedAt: z.string().nullable(),
      })
      .nullable(),
  }),
);

/** An item's review note (null when no supervisor has reviewed or returned it). */
export function useReviewNote(itemId: number, enabled: boolean) {
  return useQuery({
    queryKey: queryKeys.queue.reviewNote(itemId),
    queryFn: ({ signal }) => apiRequest(reviewNoteSchema, `/api/supervisor/items/${itemId}/review-note`, { signal }),
    enabled,
    staleTime: 30_000,
  });
}
