/** The socket's filter: the policy module's `canSee` on each change's audience, and candidate-event redaction. */
import { describe, expect, it } from 'vitest';
import { canSee } from '@shared/auth/policies';
import { visibleTo, type PreparedChange, type Viewer } from '@server/realtime/visible-changes';

const operator: Viewer = { id: 'op', roles: ['operator'], stationIds: [1, 2, 3] };
const analyst: Viewer = { id: 'an', roles: ['analyst'], stationIds: [] };
const supervisor: Viewer = { id: 'sup', roles: ['supervisor'], stationIds: [] };
const admin: Viewer = { id: 'adm', roles: ['admin'], stationIds: [] };
const message = (summary: Record<string, unknown> | null) => ({ seq: 1, resource: 'candidate_event', id: 9, kind: 'created' as const, version: 1, summary, at: '2026-03-14T09:00:00.000Z' });

describe('canSee (shared/auth/policies.ts)', () => {
  it('follows the per-station reach of the action, the named user, and refuses nobody-signed-in', () => {
    const kv01 = { action: 'queue.view' as const, stationIds: [1] };
    const kv04 = { action: 'queue.view' as const, stationIds: [4] };
    expect([operator, analyst, supervisor, admin].map((v) => canSee(v, kv01))).toEqual([true, true, true, false]);
    expect([operator, analyst, supervisor, admin].map((v) => canSee(v, kv04))).toEqual([false, true, true, false]);
    expect(canSee(operator, { action: 'queue.view', stationIds: [4, 2] })).toBe(true);
    const inbox = { action: 'inbox.view' as const, userId: 'sup' };
    expect(canSee(supervisor, inbox)).toBe(true);
    expect(canSee({ ...supervisor, id: 'sup2' }, inbox)).toBe(false);
    // The named user without the right sees nothing either.
    expect(canSee({ ...analyst, id: 'sup' }, inbox)).toBe(false);
    expect(canSee(null, kv01)).toBe(false);
  });
});

describe('visibleTo', () => {
  const event: PreparedChange = {
    message: message({ anchorItemId: 11, itemIds: [11, 44, 55], stationCount: 3 }),
    audience: { action: 'queue.view', stationIds: [1, 4, 5], itemStations: [[11, 1], [44, 4], [55, 5]] },
  };
  it('hands the same message object to a viewer of every station, so one encoding serves them all', () => {
    expect(visibleTo(analyst, event)).toBe(event.message);
  });
  it('lists only the viewer\'s stations\' items to an operator, and nothing to whom the audience excludes', () => {
    expect(visibleTo(operator, event)?.summary).toEqual({ anchorItemId: 11, itemIds: [11], stationCount: 3 });
    expect(visibleTo({ ...operator, stationIds: [6] }, event)).toBeNull();
    expect(visibleTo(admin, event)).toBeNull();
  });
  it('sends a change without an audience to nobody', () => {
    expect(visibleTo(supervisor, { message: message(null), audience: null })).toBeNull();
  });
});
