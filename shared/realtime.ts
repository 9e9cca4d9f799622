import { z } from 'zod';
import { lazySchema } from './schemas/lazy-schema';
import { actionSchema } from './auth/policies';

/**
 * Close codes of the live channel. RFC 6455 §7.4.2 leaves 4000–4999 to applications; ours mirror
 * the HTTP statuses they stand for.
 */
/** Close code for an upgrade without a valid session or from a foreign origin (RFC 6455 "policy violation"). */
export const wsPolicyViolation = 1008;
/** Close code when the socket's session ended: signed out, expired, ended elsewhere, or the account deactivated (as HTTP 401). */
export const wsSessionEnded = 4401;
/** Close code when the person's roles or station assignments changed: reconnect, then reload what the socket fed (as HTTP 403). */
export const wsRightsChanged = 4403;

/**
 * Who may see a change (stored with it in change_log.audience, never sent): the policy action,
 * the stations it is about, the one user it is meant for, and — for a change that lists items of
 * several stations (a candidate event) — each listed item's station, so a viewer limited to some
 * stations receives only their items. See `canSee` in shared/auth/policies.ts.
 */
export const changeAudienceSchema = lazySchema(() =>
  z.object({
    action: actionSchema,
    stationIds: z.array(z.number().int()).optional(),
    userId: z.string().optional(),
    /** `[itemId, stationId]` pairs of the items the summary lists in `itemIds`. */
    itemStations: z.array(z.tuple([z.number().int(), z.number().int()])).optional(),
  }),
);

/** Who may see a change. */
export type ChangeAudience = z.infer<typeof changeAudienceSchema>;

/** One change as the live channel sends it: a hint (id, version) plus a small summary, never full state. */
export const changeMessageSchema = lazySchema(() =>
  z.object({
    seq: z.number().int().nonnegative(),
    resource: z.string(),
    id: z.number().int(),
    kind: z.enum(['created', 'updated', 'deleted']),
    version: z.number().int(),
    summary: z.record(z.string(), z.unknown()).nullable(),
    at: z.string(),
  }),
);

/** A change hint. */
export type ChangeMessage = z.infer<typeof changeMessageSchema>;

/** Messages from the server. */
export const serverMessageSchema = lazySchema(() =>
  z.discriminatedUnion('type', [
    /** First message: the latest sequence number now. */
    z.object({ type: z.literal('hello'), seq: z.number().int().nonnegative() }),
    /** Changes in sequence order, each sent once. */
    z.object({ type: z.literal('changes'), changes: z.array(changeMessageSchema) }),
    /** The client's resume point is older than what the change log keeps: refetch everything. */
    z.object({ type: z.literal('refetch'), seq: z.number().int().nonnegative(), reason: z.string() }),
  ]),
);

/** A message from the server. */
export type ServerMessage = z.infer<typeof serverMessageSchema>;

/** Messages from the client. */
export const clientMessageSchema = lazySchema(() =>
  z.discriminatedUnion('type', [
    /** Send everything after `since` (the last seq this client saw), then live changes. */
    z.object({ type: z.literal('resume'), since: z.number().int().nonnegative() }),
  ]),
);

/** A message from the client. */
export type ClientMessage = z.infer<typeof clientMessageSchema>;
