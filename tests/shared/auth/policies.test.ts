/**
 * The one policy module against the role descriptions of issue 3 ("Roles and what each may do"),
 * written out case by case here rather than derived from the table under test.
 */
import { describe, expect, it } from 'vitest';
import { actions, allowedActions, can, stationScope, type PolicyActor } from '@shared/auth/policies';

const operator: PolicyActor = { roles: ['operator'], stationIds: [1, 2, 3] };
const analyst: PolicyActor = { roles: ['analyst'], stationIds: [] };
const supervisor: PolicyActor = { roles: ['supervisor'], stationIds: [] };
const admin: PolicyActor = { roles: ['admin'], stationIds: [] };

describe('policies', () => {
  it('nobody signed in may do nothing', () => {
    for (const a of actions) expect(can(null, a)).toBe(false);
    expect(stationScope(null, 'station.view')).toBe('none');
  });

  it('operator: only assigned stations — view, edit, upload, tokens, their items; registers no station (issue 5)', () => {
    for (const a of ['station.view', 'station.edit', 'upload.create', 'token.manage', 'queue.view'] as const) {
      expect(can(operator, a, { stationId: 2 }), a).toBe(true);
      expect(can(operator, a, { stationId: 4 }), a).toBe(false);
    }
    expect(can(operator, 'station.create')).toBe(false);
    expect(stationScope(operator, 'station.view')).toEqual([1, 2, 3]);
    for (const a of ['queue.claim', 'queue.label', 'queue.dismiss', 'queue.escalate', 'review.evaluate', 'thresholds.edit', 'catalogue.export', 'audit.view', 'users.manage', 'mailbox.view'] as const)
      expect(can(operator, a), a).toBe(false);
  });

  it('an operator with no station yet still reaches the station list (empty), but no station', () => {
    const fresh: PolicyActor = { roles: ['operator'], stationIds: [] };
    expect(can(fresh, 'station.view')).toBe(true);
    expect(can(fresh, 'station.view', { stationId: 1 })).toBe(false);
    expect(stationScope(fresh, 'station.view')).toEqual([]);
  });

  it('analyst: works the queue for every station, views every station, nothing of supervision or admin', () => {
    for (const a of ['queue.view', 'queue.claim', 'queue.label', 'queue.dismiss', 'queue.escalate', 'station.view'] as const) expect(can(analyst, a, { stationId: 99 }), a).toBe(true);
    for (const a of ['review.evaluate', 'thresholds.edit', 'catalogue.export', 'audit.view', 'users.manage', 'upload.create', 'station.create', 'station.edit', 'token.manage'] as const)
      expect(can(analyst, a), a).toBe(false);
  });

  it('supervisor: every analyst right plus registering and editing stations (issue 5), review, thresholds, export and the audit log', () => {
    for (const a of allowedActions(analyst)) expect(can(supervisor, a, { stationId: 7 }), a).toBe(true);
    for (const a of ['station.create', 'review.evaluate', 'thresholds.edit', 'catalogue.export', 'audit.view', 'inbox.view', 'dashboard.view'] as const) expect(can(supervisor, a), a).toBe(true);
    expect(can(supervisor, 'station.edit', { stationId: 7 })).toBe(true);
    expect(can(supervisor, 'users.manage')).toBe(false);
    expect(can(supervisor, 'mailbox.view')).toBe(false);
  });

  it('admin: users, invitations, mailbox, audit, station registry; no queue work implied', () => {
    for (const a of ['users.manage', 'mailbox.view', 'audit.view', 'station.view', 'station.create', 'station.edit', 'token.manage'] as const) expect(can(admin, a, { stationId: 5 }), a).toBe(true);
    for (const a of ['queue.view', 'queue.claim', 'queue.label', 'review.evaluate', 'thresholds.edit', 'catalogue.export', 'upload.create'] as const) expect(can(admin, a), a).toBe(false);
  });

  it('several roles add up; an "all" reach wins over "assigned"', () => {
    const both: PolicyActor = { roles: ['operator', 'admin'], stationIds: [1] };
    expect(can(both, 'station.edit', { stationId: 6 })).toBe(true);
    expect(stationScope(both, 'station.edit')).toBe('all');
    expect(can(both, 'upload.create', { stationId: 6 })).toBe(false);
    expect(can(both, 'upload.create', { stationId: 1 })).toBe(true);
    expect(stationScope({ roles: ['operator', 'analyst'], stationIds: [1] }, 'queue.view')).toBe('all');
  });
});
