import { and, eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { auditLog } from '@server/db/schema/audit-log';
import { queueItems } from '@server/db/schema/queue-items';
import { claimItem, keepClaimAlive, lapseIdleClaims, releaseItem } from '@server/features/queue/queue-transitions';
import { createTestDatabase, type TestDatabase } from '@tests/setup/test-db';
import { createItem, createPerson, type TestPerson } from '@tests/setup/queue-fixtures';

describe('queue transitions: claim lapse (real MariaDB)', () => {
  let database: TestDatabase;
  let ana: TestPerson;
  const person = (p: TestPerson) => ({ id: p.id, displayName: p.displayName, email: p.email });
  const t0 = new Date('2026-03-14T09:00:00.000Z');
  const at = (minutes: number) => new Date(t0.getTime() + minutes * 60_000);

  beforeAll(async () => {
    database = await createTestDatabase();
    ana = await createPerson(database.db, { roles: ['analyst'], displayName: 'Ana Kestrel' });
  });
  afterAll(async () => {
    await database.drop();
  });

  it('a claim idle longer than the limit goes back to new with a claim-lapsed audit row; a fresher one stays', async () => {
    const idle = await createItem(database.db);
    const fresh = await createItem(database.db);
    let notified = 0;
    await claimItem({ db: database.db, now: () => at(0) }, person(ana), idle, 1);
    await claimItem({ db: database.db, now: () => at(10) }, person(ana), fresh, 1);
    const lapsed = await lapseIdleClaims({ db: database.db, now: () => at(15.5), notify: () => notified++ }, 15);
    expect(lapsed.map((r) => r.id)).toEqual([idle]);
    expect(notified).toBe(1);
    const [a] = await database.db.select().from(queueItems).where(eq(queueItems.id, idle));
    expect(a).toMatchObject({ state: 'new', claimedByUserId: null, claimedAt: null, version: 3, updatedByUserId: null });
    const [b] = await database.db.select().from(queueItems).where(eq(queueItems.id, fresh));
    expect(b).toMatchObject({ state: 'in review', claimedByUserId: ana.id, version: 2 });
    const audits = await database.db.select().from(auditLog).where(and(eq(auditLog.targetType, 'queue_item'), eq(auditLog.targetId, String(idle))));
    expect(audits.map((r) => r.action)).toEqual(['queue.claimed', 'queue.claim_lapsed']);
    expect(audits[1]?.details).toMatchObject({ formerClaimerUserId: ana.id, idleMinutes: 15 });
  });

  it('keeping a claim alive pushes the lapse out; a stale claimer learns the claim lapsed', async () => {
    const id = await createItem(database.db);
    await claimItem({ db: database.db, now: () => at(0) }, person(ana), id, 1);
    await keepClaimAlive({ db: database.db, now: () => at(12) }, person(ana), id);
    expect(await lapseIdleClaims({ db: database.db, now: () => at(20) }, 15)).toEqual([]);
    expect((await lapseIdleClaims({ db: database.db, now: () => at(27.1) }, 15)).map((r) => r.id)).toContain(id);
    await expect(releaseItem({ db: database.db }, person(ana), id, 2)).rejects.toMatchObject({
      status: 409,
      message: expect.stringMatching(/changed since you loaded it \(version 2, now 3\): claim lapse ended the claim \(claim lapsed: idle too long\)/),
    });
    await expect(keepClaimAlive({ db: database.db }, person(ana), id)).rejects.toMatchObject({ status: 409 });
  });

  it('refuses a non-positive idle limit', async () => {
    await expect(lapseIdleClaims({ db: database.db }, 0)).rejects.toThrow(/idle minutes must be a positive number/);
  });
});
