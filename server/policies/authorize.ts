import type { Request, RequestHandler } from 'express';
import { can, stationScope, type Action, type PolicyTarget } from '@shared/auth/policies';
import { forbidden, unauthorized } from '@server/errors';
import { currentUser, optionalUser } from '@server/auth/authenticate';
import type { AuthUser } from '@server/auth/principal';

const actionWords: Record<Action, string> = {
  'station.view': 'view this station',
  'station.create': 'register stations',
  'station.edit': 'edit this station',
  'upload.create': 'upload windows for this station',
  'token.manage': "manage this station's ingest tokens",
  'queue.view': 'see the review queue',
  'queue.claim': 'claim queue items',
  'queue.label': 'label queue items',
  'queue.dismiss': 'dismiss queue items',
  'queue.escalate': 'escalate queue items',
  'review.evaluate': 'review labelled events',
  'inbox.view': 'see the escalation inbox',
  'dashboard.view': 'see the dashboard',
  'thresholds.edit': 'edit thresholds',
  'catalogue.export': 'export the catalogue',
  'audit.view': 'see the audit log',
  'users.manage': 'manage users',
  'mailbox.view': 'see the mailbox',
  'event.view': 'see this event',
  'event.pick': 'pick phases on events',
  'event.edit': 'change events',
  'velocity-model.edit': "edit the network's velocity model",
};

/**
 * The server side of the one policy module: throws 403 `forbidden` unless `user` may do `action`
 * (on `target`'s station when given). Handlers call this after loading the station they act on.
 */
export function authorize(user: AuthUser, action: Action, target?: PolicyTarget): void {
  if (!can(user, action, target)) throw forbidden(`You may not ${actionWords[action]}`);
}

/**
 * The stations `user` may act on with `action`, for filtering lists: `'all'` or the assigned ids.
 * Throws 403 when no role of theirs reaches the action.
 */
export function authorizedStations(user: AuthUser, action: Action): 'all' | readonly number[] {
  const scope = stationScope(user, action);
  if (scope === 'none') throw forbidden(`You may not ${actionWords[action]}`);
  return scope;
}

/**
 * Route middleware: 401 when nobody is signed in, 403 unless one of the user's roles reaches
 * `action`. Station-scoped checks still need `authorize(user, action, { stationId })` in the handler.
 */
export function requirePermission(action: Action): RequestHandler {
  return (req: Request, _res, next) => {
    const user = optionalUser(req);
    if (!user) return next(unauthorized());
    if (!can(user, action)) return next(forbidden(`You may not ${actionWords[action]}`));
    next();
  };
}

/** Shorthand for handlers: the signed-in user, after checking `action` (401/403). */
export function userFor(req: Request, action: Action, target?: PolicyTarget): AuthUser {
  const user = currentUser(req);
  authorize(user, action, target);
  return user;
}
