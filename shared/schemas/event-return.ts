import { z } from 'zod';
import { lazySchema } from './lazy-schema';

/**
 * POST /api/supervisor/events/:id/return body: a supervisor sends an event back to the analysts
 * with a comment they see on each member window (the comment is required: it says what to look at).
 */
export const eventReturnBodySchema = lazySchema(() =>
  z
    .object({
      /** The event version the supervisor saw (optimistic locking). */
      eventVersion: z.number().int().positive('must be the event version you saw'),
      comment: z.string().trim().min(3, 'say why you return it (at least 3 characters)').max(2000),
    })
    .strict(),
);

/** The answer: the event's new version and the member windows that went back to the queue. */
export const eventReturnResultSchema = lazySchema(() =>
  z.object({
    eventId: z.number(),
    eventVersion: z.number(),
    evaluationStatus: z.literal('preliminary'),
    returnedItemIds: z.array(z.number()),
  }),
);

/** The answer of POST /api/supervisor/events/:id/return. */
export type EventReturnResult = z.infer<typeof eventReturnResultSchema>;
