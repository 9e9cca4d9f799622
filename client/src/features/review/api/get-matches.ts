import { queryOptions, useQuery } from '@tanstack/react-query';
import { itemMatchesResponseSchema } from '@shared/schemas/similarity';
import { apiUrls } from '@client/api/urls';
import { apiRequest } from '@client/lib/api-client';
import { queryKeys } from '@client/lib/query-keys';

/** Query options of an item's best matches against its station's templates. */
export function itemMatchesOptions(id: number) {
  return queryOptions({ queryKey: queryKeys.similarity.item(id), queryFn: ({ signal }) => apiRequest(itemMatchesResponseSchema, apiUrls.itemMatches(id), { signal }), staleTime: 60_000 });
}

/** An item's best matches, their overlays and the suggested label. */
export function useItemMatches(id: number) {
  return useQuery(itemMatchesOptions(id));
}
