import { z } from 'zod';
import type { Role } from './roles';

/**
 * The one policy module. Every authorization decision in Seisift is one of these pure predicates:
 * the server wraps them (server/policies/authorize.ts → 403), the client calls the same functions
 * only to hide controls. No role checks anywhere else.
 *
 * Who may do what (issue 3, "Roles and what each may do"):
 * - operator: only the stations assigned to them — view, edit, upload, ingest tokens, their items.
 *   Operators do not register stations (issue 5: "Supervisors and admins create stations;
 *   operators edit their own").
 * - analyst: works the queue for every station; may view every station (its health helps when
 *   judging an item), so the Stations page is in an analyst's navigation.
 * - supervisor: every analyst right, plus registering stations, review, thresholds, catalogue
 *   export, audit log.
 * - events: operators see those involving their stations; analysts and supervisors pick, edit and
 *   relocate them; only supervisors edit a network's velocity model and ML settings.
 * - admin: people, roles, station assignments, invitations, the station registry and its tokens,
 *   the audit log and the local mailbox. Admin implies no analyst/supervisor right, and no role
 *   implies admin.
 */
export const actions = [
  'station.view',
  'station.create',
  'station.edit',
  'upload.create',
  'token.manage',
  'queue.view',
  'queue.claim',
  'queue.label',
  'queue.dismiss',
  'queue.escalate',
  'review.evaluate',
  'inbox.view',
  'dashboard.view',
  'thresholds.edit',
  'catalogue.export',
  'audit.view',
  'users.manage',
  'mailbox.view',
  'event.view',
  'event.pick',
  'event.edit',
  'velocity-model.edit',
] as const;

/** One action name. */
export type Action = (typeof actions)[number];

/** zod schema of an action name. */
export const actionSchema = z.enum(actions);

/** Who is asking: their roles and (for operators) the station ids assigned to them. */
export type PolicyActor = {
  roles: readonly Role[];
  /** Ids of the stations assigned to this user (station_assignments). */
  stationIds: readonly number[];
};

/** What an action is about, when it is about one station. */
export type PolicyTarget = { stationId: number };

/**
 * How each role reaches an action: `'all'` for every station (or an action with no station),
 * `'assigned'` only for stations assigned to the user. A role missing from an action's entry has
 * no right to it.
 */
export const policyTable: Record<Action, Partial<Record<Role, 'all' | 'assigned'>>> = {
  'station.view': { operator: 'assigned', analyst: 'all', supervisor: 'all', admin: 'all' },
  'station.create': { supervisor: 'all', admin: 'all' },
  'station.edit': { operator: 'assigned', supervisor: 'all', admin: 'all' },
  'upload.create': { operator: 'assigned' },
  'token.manage': { operator: 'assigned', admin: 'all' },
  'queue.view': { operator: 'assigned', analyst: 'all', supervisor: 'all' },
  'queue.claim': { analyst: 'all', supervisor: 'all' },
  'queue.label': { analyst: 'all', supervisor: 'all' },
  'queue.dismiss': { analyst: 'all', supervisor: 'all' },
  'queue.escalate': { analyst: 'all', supervisor: 'all' },
  'review.evaluate': { supervisor: 'all' },
  'inbox.view': { supervisor: 'all' },
  'dashboard.view': { supervisor: 'all' },
  'thresholds.edit': { supervisor: 'all' },
  'catalogue.export': { supervisor: 'all' },
  'audit.view': { supervisor: 'all', admin: 'all' },
  'users.manage': { admin: 'all' },
  'mailbox.view': { admin: 'all' },
  // Events (issue 17): an operator sees the events that involve one of their stations; analysts pick,
  // change members, re-pick amplitudes and relocate; a supervisor also edits the network's velocity model.
  'event.view': { operator: 'assigned', analyst: 'all', supervisor: 'all' },
  'event.pick': { analyst: 'all', supervisor: 'all' },
  'event.edit': { analyst: 'all', supervisor: 'all' },
  'velocity-model.edit': { supervisor: 'all' },
};

/**
 * Which stations `actor` may act on with `action`.
 * @returns `'all'` (every station), the list of assigned station ids, or `'none'`
 */
export function stationScope(actor: PolicyActor | null, action: Action): 'all' | readonly number[] | 'none' {
  if (!actor) return 'none';
  const entry = policyTable[action];
  let assigned = false;
  for (const role of actor.roles) {
    const reach = entry[role];
    if (reach === 'all') return 'all';
    if (reach === 'assigned') assigned = true;
  }
  return assigned ? actor.stationIds : 'none';
}

/**
 * Whether `actor` may do `action`.
 * - With a `target`, the answer is for that station: a role with `'assigned'` reach needs the
 *   station among `actor.stationIds`.
 * - Without a target the answer is whether one of the actor's roles reaches the action at all
 *   (an operator with no station yet may still open the stations list and see it empty).
 *   Handlers acting on one station must pass it; lists filter with `stationScope`.
 * Nobody signed in (`null`) may do nothing.
 */
export function can(actor: PolicyActor | null, action: Action, target?: PolicyTarget): boolean {
  const scope = stationScope(actor, action);
  if (scope === 'none') return false;
  if (scope === 'all' || target === undefined) return true;
  return scope.includes(target.stationId);
}

/**
 * Who may see one change on the live channel (server/realtime/hub.ts): the action that grants
 * sight of it, the stations it is about, and, for a change meant for one person (their own
 * inbox), that person's user id. Carried with every change, so the hub decides per socket
 * without a query.
 */
export type PolicyAudience = {
  action: Action;
  /** The stations the change is about; absent when it is about no station. */
  stationIds?: readonly number[];
  /** Only this user may see it (and only while they reach `action`). */
  userId?: string;
};

/**
 * Whether `actor` (with their user id) may see a change meant for `audience`: they reach
 * `audience.action` — for at least one of its stations when it names stations — and, when it
 * names a user, they are that user. The same rule as the API's: an operator's `queue.view` is
 * limited to their stations, so a change about KV04 never reaches the operator of KV01–KV03.
 * Nobody signed in (`null`) sees nothing.
 */
export function canSee(actor: (PolicyActor & { id: string }) | null, audience: PolicyAudience): boolean {
  if (!actor) return false;
  if (audience.userId !== undefined && audience.userId !== actor.id) return false;
  const scope = stationScope(actor, audience.action);
  if (scope === 'none') return false;
  if (scope === 'all' || audience.stationIds === undefined) return true;
  return audience.stationIds.some((id) => scope.includes(id));
}

/** Every action one of `actor`'s roles reaches, in `actions` order (for hiding controls). */
export function allowedActions(actor: PolicyActor | null): Action[] {
  return actions.filter((a) => can(actor, a));
}
