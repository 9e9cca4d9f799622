/**
 * Admin and audit routes beyond the role matrix: station assignments change an operator's scope
 * on the next request, the users list, audit filters and paging, 400s naming the field.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { recordAudit } from '@server/features/audit/audit';
import { call, createWorld, type World } from '@tests/server/support/world';

describe('admin and audit API', () => {
  let w: World;
  beforeAll(async () => {
    w = await createWorld();
  });
  afterAll(async () => {
    await w.close();
  });

  it('assigning a station to an operator widens their scope at once; removing it narrows it', async () => {
    const op = await w.freshUser(['operator'], { stationCodes: ['KV01'] });
    const kv04 = w.stationIds.KV04!;
    expect((await call(w, 'GET', `/api/stations/${kv04}`, op.cookie)).status).toBe(403);
    expect((await call(w, 'PUT', `/api/admin/users/${op.id}/stations`, w.cookie.admin).send({ stationIds: [w.stationIds.KV01, kv04] })).status).toBe(204);
    expect((await call(w, 'GET', `/api/stations/${kv04}`, op.cookie)).status).toBe(200);
    const list = await call(w, 'GET', '/api/stations', op.cookie);
    expect(list.body.stations.map((s: { code: string }) => s.code).sort()).toEqual(['KV01', 'KV04']);
    expect((await call(w, 'PUT', `/api/admin/users/${op.id}/stations`, w.cookie.admin).send({ stationIds: [] })).status).toBe(204);
    expect((await call(w, 'GET', `/api/stations/${kv04}`, op.cookie)).status).toBe(403);
  });

  it('lists users with roles, stations, status and open sessions', async () => {
    const res = await call(w, 'GET', '/api/admin/users', w.cookie.admin);
    expect(res.status).toBe(200);
    const op = res.body.users.find((u: { email: string }) => u.email === 'operator@kestrel.example');
    expect(op).toMatchObject({ roles: ['operator'], stationIds: [w.stationIds.KV01, w.stationIds.KV02, w.stationIds.KV03], active: true, hasPassword: true });
    expect(op.sessions).toBeGreaterThanOrEqual(1);
    expect(JSON.stringify(res.body)).not.toMatch(/argon2/);
  });

  it('names the bad field: unknown role, unknown station, unknown user', async () => {
    const u = await w.freshUser(['analyst']);
    const role = await call(w, 'PUT', `/api/admin/users/${u.id}/roles`, w.cookie.admin).send({ roles: ['overlord'] });
    expect(role.status).toBe(400);
    expect(role.body.error.message).toMatch(/^roles\.0: /);
    const st = await call(w, 'PUT', `/api/admin/users/${u.id}/stations`, w.cookie.admin).send({ stationIds: [424242] });
    expect(st.status).toBe(400);
    expect(st.body.error.message).toBe('stationIds: no station with id 424242');
    expect((await call(w, 'PUT', '/api/admin/users/nobody-here/roles', w.cookie.admin).send({ roles: [] })).status).toBe(404);
  });

  it('pages and filters the audit log: action prefix, exact action, actor, time range', async () => {
    const db = w.ctx.database.db;
    for (let i = 0; i < 7; i++) await recordAudit(db, { actor: { id: null, label: `script-${i}@kestrel.example` }, action: 'queue.claimed', targetType: 'queue_item', targetId: i, ip: '10.0.0.1' });
    await recordAudit(db, { actor: { id: null, label: 'other@kestrel.example' }, action: 'queue.dismissed', targetType: 'queue_item', targetId: 99 });
    const all = await call(w, 'GET', '/api/audit?action=queue.&limit=5', w.cookie.supervisor);
    expect(all.status).toBe(200);
    expect(all.body.total).toBe(8);
    expect(all.body.rows).toHaveLength(5);
    const page2 = await call(w, 'GET', '/api/audit?action=queue.&limit=5&offset=5', w.cookie.supervisor);
    expect(page2.body.rows).toHaveLength(3);
    const ids = [...all.body.rows, ...page2.body.rows].map((r: { id: number }) => r.id);
    expect(new Set(ids).size).toBe(8);
    expect([...ids].sort((a, b) => b - a)).toEqual(ids); // newest first
    expect((await call(w, 'GET', '/api/audit?action=queue.dismissed', w.cookie.admin)).body.total).toBe(1);
    expect((await call(w, 'GET', '/api/audit?actor=script-3', w.cookie.admin)).body.rows.map((r: { targetId: string }) => r.targetId)).toEqual(['3']);
    expect((await call(w, 'GET', '/api/audit?action=queue.&to=2000-01-01T00:00:00Z', w.cookie.admin)).body.total).toBe(0);
    const bad = await call(w, 'GET', '/api/audit?limit=0', w.cookie.admin);
    expect(bad.status).toBe(400);
    expect(bad.body.error.message).toMatch(/^limit: /);
    const badAction = await call(w, 'GET', '/api/audit?action=DROP%20TABLE', w.cookie.admin);
    expect(badAction.status).toBe(400);
    // `%` and `_` in a filter are literal, not wildcards.
    expect((await call(w, 'GET', '/api/audit?actor=%25', w.cookie.admin)).body.total).toBe(0);
  });

  it('refuses a malformed audit action name when recording', async () => {
    await expect(recordAudit(w.ctx.database.db, { actor: null, action: 'NotDotted' })).rejects.toThrow(/dotted lower-case/);
  });
});
