import { queryOptions, useQuery } from '@tanstack/react-query';
import { itemMatchesResponseSchema } from '@shared/schemas/similarity';
import { apiRequest } from '@client/lib/api-client';

/** Query key of an item's matches ("seen before"). */
export const itemMatchesKey = (id: number) => ['similarity', 'item', id] as const;

/** Query options of an item's best matches against its station's templates. */
export function itemMatchesOptions(id: number) {
  return queryOptions({ queryKey: itemMatchesKey(id), queryFn: ({ signal }) => apiRequest(itemMatchesResponseSchema, `/api/similarity/items/${id}/matches`, { signal }), staleTime: 60_000 });
}

/** An item's best matches, their overlays and the suggested label. */
export function useItemMatches(id: number) {
  return useQuery(itemMatchesOptions(id));
}
