import { z } from 'zod';

/** Close code for an upgrade without a valid session or from a foreign origin (RFC 6455 "policy violation"). */
export const wsPolicyViolation = 1008;

/** One change as the live channel sends it: a hint (id, version) plus a small summary, never full state. */
export const changeMessageSchema = z.object({
  seq: z.number().int().nonnegative(),
  resource: z.string(),
  id: z.number().int(),
  kind: z.enum(['created', 'updated', 'deleted']),
  version: z.number().int(),
  summary: z.record(z.string(), z.unknown()).nullable(),
  at: z.string(),
});

/** A change hint. */
export type ChangeMessage = z.infer<typeof changeMessageSchema>;

/** Messages from the server. */
export const serverMessageSchema = z.discriminatedUnion('type', [
  /** First message: the latest sequence number now. */
  z.object({ type: z.literal('hello'), seq: z.number().int().nonnegative() }),
  /** Changes in sequence order, each sent once. */
  z.object({ type: z.literal('changes'), changes: z.array(changeMessageSchema) }),
  /** The client's resume point is older than what the change log keeps: refetch everything. */
  z.object({ type: z.literal('refetch'), seq: z.number().int().nonnegative(), reason: z.string() }),
]);

/** A message from the server. */
export type ServerMessage = z.infer<typeof serverMessageSchema>;

/** Messages from the client. */
export const clientMessageSchema = z.discriminatedUnion('type', [
  /** Send everything after `since` (the last seq this client saw), then live changes. */
  z.object({ type: z.literal('resume'), since: z.number().int().nonnegative() }),
]);

/** A message from the client. */
export type ClientMessage = z.infer<typeof clientMessageSchema>;
