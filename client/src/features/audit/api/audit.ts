import { keepPreviousData, useQuery } from '@tanstack/react-query';
import { z } from 'zod';
import { lazySchema } from '@shared/schemas/lazy-schema';
import { auditRowSchema } from '@shared/auth/schemas';
import { apiRequest } from '@client/lib/api-client';
import { queryKeys } from '@client/lib/query-keys';

/** Filters of the audit page; empty strings mean "any". */
/** The audit page's filters; `from` and `to` are ISO 8601 UTC times (both ends included) or ''. */
export type AuditFilters = { action: string; actor: string; targetType: string; from: string; to: string };

/** Rows per audit page. */
export const auditPageSize = 50;

const pageSchema = lazySchema(() => z.object({ rows: z.array(auditRowSchema), total: z.number(), limit: z.number(), offset: z.number() }));

/** GET /api/audit with filters and an offset; the previous page stays shown while the next loads. */
export function useAuditPage(filters: AuditFilters, offset: number) {
  return useQuery({
    queryKey: queryKeys.audit.list(filters, offset),
    placeholderData: keepPreviousData,
    queryFn: () =>
      apiRequest(pageSchema, '/api/audit', {
        query: {
          limit: auditPageSize,
          offset,
          action: filters.action || undefined,
          actor: filters.actor || undefined,
          targetType: filters.targetType || undefined,
          from: filters.from || undefined,
          to: filters.to || undefined,
        },
      }),
  });
}
