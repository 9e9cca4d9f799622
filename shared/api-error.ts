import { z } from 'zod';

/** The one JSON shape of every API error: `{ "error": { "code", "message", "details"? } }`. */
export const apiErrorBodySchema = z.object({
  error: z.object({
    /** A stable machine-readable id, e.g. `validation_failed`, `not_found`, `conflict`. */
    code: z.string(),
    /** Words for a person: what was wrong, naming the field, file or limit. */
    message: z.string(),
    details: z.unknown().optional(),
  }),
});

/** Body of an API error response. */
export type ApiErrorBody = z.infer<typeof apiErrorBodySchema>;
