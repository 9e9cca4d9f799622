import type { z } from 'zod';
import { capMessage } from '@shared/quote-input';
import { badRequest } from '@server/errors';

/**
 * Parses `value` with `schema`; on failure throws 400 `validation_failed` whose message names the
 * first problem as "field: message" and whose details list every issue with its path.
 */
export function parseInput<S extends z.ZodType>(schema: S, value: unknown, where: 'body' | 'query' | 'params' | 'message' = 'body'): z.infer<S> {
  const result = schema.safeParse(value);
  if (result.success) return result.data;
  const issues = result.error.issues.map((i) => ({ path: i.path.map(String).join('.'), message: i.message }));
  const first = issues[0];
  const field = first?.path ? first.path : where;
  // Our schemas' messages may name the value they refuse: never more than a line of it.
  throw badRequest(capMessage(`${field}: ${first?.message ?? 'invalid'}`), { issues: issues.map((i) => ({ ...i, message: capMessage(i.message) })) });
}
