import { and, asc, eq, inArray } from 'drizzle-orm';
import type { Express } from 'express';
import { XMLParser } from 'fast-xml-parser';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createApp } from '@server/app';
import { auditLog } from '@server/db/schema/audit-log';
import { changeLog } from '@server/db/schema/change-log';
import { mailMessages } from '@server/db/schema/mail-messages';
import { queueItems } from '@server/db/schema/queue-items';
import { stations } from '@server/db/schema/stations';
import { candidateEvents, inboxEntries, itemArrivals } from '@server/db/schema/supervisor';
import { windows } from '@server/db/schema/uploads';
import { publicBaseUrl } from '@server/email/links';
import { fanOutEscalation } from '@server/features/supervision/escalations';
import { firstTriggerMs, getCandidateEvent, haversineKm, onItemsCreated } from '@server/features/events/candidate-events';
import { createTestContext, type TestContext } from '@tests/setup/test-app';
import { createItem, createPerson, ensureStation, type TestPerson } from '@tests/setup/queue-fixtures';

const origin = 'http://127.0.0.1';

describe('supervisor API (real MariaDB, fake SMTP, supertest)', () => {
  let ctx: TestContext;
  let app: Express;
  let ana: TestPerson;
  let sue: TestPerson;
  let sam: TestPerson;
  let operator: TestPerson;
  let admin: TestPerson;

  const get = (p: TestPerson | null, url: string) => {
    const r = request(app).get(url);
    return p ? r.set('Cookie', p.cookie) : r;
  };
  const post = (p: TestPerson | null, url: string, body: object) => {
    const r = request(app).post(url).set('Origin', origin).set('Host', '127.0.0.1').send(body);
    return p ? r.set('Cookie', p.cookie) : r;
  };
  const item = async (id: number) => {
    const [row] = await ctx.database.db.select().from(queueItems).where(eq(queueItems.id, id));
    if (!row) throw new Error(`no item ${id}`);
    return row;
  };
  /** Claims and labels an item as `ana` through the queue API. */
  const labelAs = async (p: TestPerson, id: number, label: object) => {
    const claimed = await post(p, `/api/queue/items/${id}/claim`, { version: (await item(id)).version }).expect(200);
    return post(p, `/api/queue/items/${id}/label`, { version: claimed.body.version, label }).expect(200);
  };
  const waitFor = async <T>(fn: () => Promise<T | undefined>, what: string): Promise<T> => {
    for (let i = 0; i < 100; i++) {
      const v = await fn();
      if (v !== undefined) return v;
      await new Promise((r) => setTimeout(r, 50));
    }
    throw new Error(`timed out waiting for ${what}`);
  };

  beforeAll(async () => {
    ctx = await createTestContext();
    app = createApp(ctx, { serveClient: false });
    const kv01 = await ensureStation(ctx.database.db, 'KV01');
    ana = await createPerson(ctx.database.db, { roles: ['analyst'], displayName: 'Ana Kestrel' });
    sue = await createPerson(ctx.database.db, { roles: ['supervisor'], displayName: 'Sue Ridge' });
    sam = await createPerson(ctx.database.db, { roles: ['supervisor'], displayName: 'Sam Ridge' });
    operator = await createPerson(ctx.database.db, { roles: ['operator'], stationIds: [kv01] });
    admin = await createPerson(ctx.database.db, { roles: ['admin'] });
  });
  afterAll(async () => {
    await ctx.close();
  });

  describe('roles (every supervisor route: 401 anonymous, 403 for roles without the right)', () => {
    const period = 'from=2026-03-14T00:00:00.000Z&to=2026-03-15T00:00:00.000Z';
    const rows: Array<{ method: 'get' | 'post'; url: string; body?: object; allowed: Array<'analyst' | 'supervisor' | 'operator' | 'admin'> }> = [
      { method: 'get', url: '/api/supervisor/inbox', allowed: ['supervisor'] },
      { method: 'post', url: '/api/supervisor/inbox/999999/read', allowed: ['supervisor'] },
      { method: 'post', url: '/api/supervisor/inbox/999999/acknowledge', allowed: ['supervisor'] },
      { method: 'post', url: '/api/supervisor/inbox/999999/confirm', allowed: ['supervisor'] },
      { method: 'post', url: '/api/supervisor/inbox/999999/return', body: { comment: 'not clear' }, allowed: ['supervisor'] },
      { method: 'get', url: '/api/supervisor/review', allowed: ['supervisor'] },
      { method: 'post', url: '/api/supervisor/review/items/999999/status', body: { version: 1, status: 'final' }, allowed: ['supervisor'] },
      { method: 'post', url: '/api/supervisor/review/items/999999/return', body: { version: 1, comment: 'look again' }, allowed: ['supervisor'] },
      { method: 'get', url: '/api/supervisor/items/999999/review-note', allowed: ['analyst', 'supervisor', 'operator'] },
      { method: 'get', url: `/api/supervisor/candidate-events?${period}`, allowed: ['analyst', 'supervisor', 'operator'] },
      { method: 'get', url: '/api/supervisor/candidate-events/999999', allowed: ['analyst', 'supervisor', 'operator'] },
      { method: 'post', url: '/api/supervisor/candidate-events/999999/label', body: { eventType: 'earthquake' }, allowed: ['analyst', 'supervisor'] },
      { method: 'get', url: '/api/supervisor/thresholds/999999', allowed: ['supervisor'] },
      { method: 'post', url: '/api/supervisor/thresholds/999999/apply', body: { thresholds: { eventZ: 3, noiseZ: 2, centroidMaxFactor: 1.5 } }, allowed: ['supervisor'] },
      { method: 'post', url: '/api/supervisor/thresholds/999999/rescore', body: { from: '2026-03-14T00:00:00Z', to: '2026-03-15T00:00:00Z' }, allowed: ['supervisor'] },
      { method: 'get', url: `/api/supervisor/dashboard?${period}`, allowed: ['supervisor'] },
      { method: 'get', url: `/api/supervisor/export?${period}`, allowed: ['supervisor'] },
    ];
    it.each(rows)('$method $url', async (row) => {
      const call = (p: TestPerson | null) => (row.method === 'get' ? get(p, row.url) : post(p, row.url, row.body ?? {}));
      expect((await call(null)).status).toBe(401);
      const people = { analyst: ana, supervisor: sue, operator, admin };
      for (const [role, p] of Object.entries(people)) {
        const res = await call(p);
        if (row.allowed.includes(role as keyof typeof people)) expect(res.status, `${role} should pass the permission check`).not.toBe(403);
        else expect(res.status, `${role} must be refused`).toBe(403);
      }
    });
  });

  describe('escalation → e-mail, live inbox, acknowledge, confirm or return', () => {
    it('mails every supervisor with stream, time and flag in the subject and a link to the item', async () => {
      const id = await createItem(ctx.database.db, { station: 'KV01', withSamples: true, burstAtS: 50 });
      const claimed = await post(ana, `/api/queue/items/${id}/claim`, { version: 1 }).expect(200);
      const before = (await ctx.database.db.select().from(changeLog).where(eq(changeLog.resource, 'inbox'))).length;
      const esc = await post(ana, `/api/queue/items/${id}/escalate`, { version: claimed.body.version, reason: 'odd double onset at KV01' }).expect(200);
      const row = await item(id);
      const link = `${publicBaseUrl(ctx.env)}/queue/items/${id}`;
      const mails = await waitFor(async () => {
        const m = await ctx.database.db.select().from(mailMessages).orderBy(asc(mailMessages.id));
        const mine = m.filter((x) => x.textBody?.includes(link));
        return mine.length >= 2 ? mine : undefined;
      }, 'two escalation mails');
      expect(mails.flatMap((m) => m.envelopeTo).sort()).toEqual([sam.email, sue.email].sort());
      for (const m of mails) {
        expect(m.subject).toBe(`Escalated: XX.KV01.00.HHZ ${row.windowStart.toISOString()} (${esc.body.flag})`);
        expect(m.textBody).toContain(`Open it: ${link}`);
        expect(m.textBody).toContain('odd double onset at KV01');
        expect(m.htmlBody).toContain(`href="${link}"`);
      }
      const inboxChanges = (await ctx.database.db.select().from(changeLog).where(eq(changeLog.resource, 'inbox'))).slice(before);
      expect(inboxChanges.map((c) => c.summary)).toEqual(expect.arrayContaining([{ userId: sue.id, unread: 1 }, { userId: sam.id, unread: 1 }]));

      const inbox = await get(sue, '/api/supervisor/inbox').expect(200);
      expect(inbox.body.unread).toBe(1);
      const entry = inbox.body.entries[0];
      expect(entry).toMatchObject({ itemId: id, reason: 'odd double onset at KV01', escalatedBy: 'Ana Kestrel', itemState: 'escalated', resolution: null });

      const acked = await post(sue, `/api/supervisor/inbox/${entry.id}/acknowledge`, {}).expect(200);
      expect(acked.body.unread).toBe(0);
      expect(acked.body.entries[0].acknowledgedAt).not.toBeNull();
      // Sam cannot act on Sue's entry.
      expect((await post(sam, `/api/supervisor/inbox/${entry.id}/confirm`, {})).status).toBe(404);

      // The escalated item has no event label: confirming it without one is refused and changes nothing.
      expect(entry.itemLabelType).toBeNull();
      const bare = await post(sue, `/api/supervisor/inbox/${entry.id}/confirm`, {}).expect(422);
      expect(bare.body.error.code).toBe('label_required');
      expect(bare.body.error.message).toMatch(/has no event label .*say which event type it is/);
      expect((await item(id)).state).toBe('escalated');
      const wrong = await post(sue, `/api/supervisor/inbox/${entry.id}/confirm`, { label: { eventType: 'tremor' } }).expect(400);
      expect(wrong.body.error.message).toMatch(/^label\.eventType/);

      const confirmed = await post(sue, `/api/supervisor/inbox/${entry.id}/confirm`, { label: { eventType: 'earthquake', certainty: 'known', note: 'felt reports from the valley' } }).expect(200);
      expect(confirmed.body.entries[0].itemLabelType).toBe('earthquake');
      const settled = await item(id);
      expect(settled.state).toBe('confirmed');
      expect(settled.labelType).toBe('earthquake');
      expect(settled.label).toEqual({ kind: 'event', eventType: 'earthquake', certainty: 'known', distanceClass: null, picks: [], note: 'felt reports from the valley\nEscalated: odd double onset at KV01' });
      // Now in the catalogue's review list (labelled as an event, confirmed), not lost between queue and catalogue.
      const review = await get(sue, '/api/supervisor/review?station=XX.KV01&type=earthquake&limit=500').expect(200);
      expect(JSON.stringify(review.body)).toContain(`"itemId":${id},`);
      const samInbox = await get(sam, '/api/supervisor/inbox').expect(200);
      expect(samInbox.body.entries[0]).toMatchObject({ itemId: id, resolution: 'confirmed', resolvedBy: 'Sue Ridge' });
      const audits = await ctx.database.db.select().from(auditLog).where(and(eq(auditLog.targetType, 'queue_item'), eq(auditLog.targetId, String(id))));
      expect(audits.map((a) => a.action)).toEqual(['queue.claimed', 'queue.escalated', 'inbox.acknowledged', 'review.confirmed']);
      // Settled twice is refused.
      expect((await post(sue, `/api/supervisor/inbox/${entry.id}/acknowledge`, {})).status).toBe(409);
    });

    it('keeps the inbox entries and notes the failure when the e-mail cannot be sent', async () => {
      const id = await createItem(ctx.database.db, { station: 'KV01' });
      const c = await post(ana, `/api/queue/items/${id}/claim`, { version: 1 }).expect(200);
      const row = await post(ana, `/api/queue/items/${id}/escalate`, { version: c.body.version, reason: 'mail failure check' }).expect(200);
      const failing = { kind: 'smtp' as const, send: async () => Promise.reject(new Error('connection refused')), close: () => undefined };
      const ids = await fanOutEscalation({ db: ctx.database.db, mailer: failing, logger: ctx.logger, publicUrl: 'https://seisift.example' }, row.body, { reason: 'mail failure check' }, { id: ana.id, displayName: ana.displayName, email: ana.email });
      expect(ids).toHaveLength(2);
      const entries = await ctx.database.db.select().from(inboxEntries).where(inArray(inboxEntries.id, ids));
      expect(entries.map((e) => e.mailError)).toEqual(['the e-mail could not be sent; see the server log', 'the e-mail could not be sent; see the server log']);
    });

    it('returns an item to the queue with a comment the analyst sees, and it can be claimed again', async () => {
      const id = await createItem(ctx.database.db, { station: 'KV01' });
      const c = await post(ana, `/api/queue/items/${id}/claim`, { version: 1 }).expect(200);
      await post(ana, `/api/queue/items/${id}/escalate`, { version: c.body.version, reason: 'not sure about this one' }).expect(200);
      const entry = (await get(sam, '/api/supervisor/inbox').expect(200)).body.entries.find((e: { itemId: number }) => e.itemId === id);
      const bad = await post(sam, `/api/supervisor/inbox/${entry.id}/return`, { comment: '' });
      expect(bad.status).toBe(400);
      expect(bad.body.error.message).toMatch(/^comment: /);
      await post(sam, `/api/supervisor/inbox/${entry.id}/return`, { comment: 'look at the N component too' }).expect(200);
      const row = await item(id);
      expect(row.state).toBe('returned');
      expect(row.claimedByUserId).toBeNull();
      const note = await get(ana, `/api/supervisor/items/${id}/review-note`).expect(200);
      expect(note.body.note).toMatchObject({ returnComment: 'look at the N component too', returnedBy: 'Sam Ridge' });
      await post(ana, `/api/queue/items/${id}/claim`, { version: row.version }).expect(200);
    });
  });

  describe('review of labelled events and the export', () => {
    let labelledId: number;
    it('lists labelled events with the event time basis and sets an evaluation status', async () => {
      labelledId = await createItem(ctx.database.db, { station: 'KV01', windowStart: new Date('2026-03-14T09:25:00.000Z'), createdAt: new Date('2026-03-14T09:27:00.000Z') });
      await labelAs(ana, labelledId, {
        eventType: 'earthquake',
        certainty: 'known',
        picks: [
          { phase: 'S', time: '2026-03-14T09:25:41.000Z', streamId: 'XX.KV01.00.HHN' },
          { phase: 'P', time: '2026-03-14T09:25:38.250Z', onset: 'impulsive', polarity: 'positive', streamId: 'XX.KV01.00.HHZ' },
        ],
        note: 'felt report from the valley',
      });
      const list = await get(sue, '/api/supervisor/review?station=KV01&type=earthquake&from=2026-03-14T00:00:00Z&to=2026-03-15T00:00:00Z').expect(200);
      const row = list.body.items.find((r: { itemId: number }) => r.itemId === labelledId);
      expect(row).toMatchObject({ eventType: 'earthquake', eventTime: '2026-03-14T09:25:38.250Z', eventTimeBasis: 'earliest P pick', evaluationStatus: 'preliminary', analyst: { displayName: 'Ana Kestrel' } });
      expect((await get(sue, '/api/supervisor/review?type=quarry%20blast&from=2026-03-14T00:00:00Z&to=2026-03-15T00:00:00Z').expect(200)).body.items).toHaveLength(0);

      const bad = await post(sue, `/api/supervisor/review/items/${labelledId}/status`, { version: row.version, status: 'approved' });
      expect(bad.status).toBe(400);
      expect(bad.body.error.message).toMatch(/^status: /);
      expect((await post(ana, `/api/supervisor/review/items/${labelledId}/status`, { version: row.version, status: 'final' })).status).toBe(403);
      expect((await post(sue, `/api/supervisor/review/items/${labelledId}/status`, { version: row.version - 1, status: 'final' })).status).toBe(409);
      await post(sue, `/api/supervisor/review/items/${labelledId}/status`, { version: row.version, status: 'final', comment: 'clear P on KV01' }).expect(200);
      expect((await item(labelledId)).state).toBe('confirmed');
      const after = await get(sue, '/api/supervisor/review?status=final').expect(200);
      expect(after.body.items.map((r: { itemId: number }) => r.itemId)).toContain(labelledId);
    });

    it('exports the reviewed catalogue as QuakeML 1.2 and CSV, parsed back', async () => {
      const q = 'from=2026-03-14T00:00:00.000Z&to=2026-03-15T00:00:00.000Z';
      const res = await get(sue, `/api/supervisor/export?${q}&format=quakeml`).expect(200);
      expect(res.headers['content-type']).toMatch(/application\/xml/);
      expect(res.headers['content-disposition']).toMatch(/attachment; filename="seisift-catalogue-2026-03-14_2026-03-15.xml"/);
      const doc = new XMLParser({ ignoreAttributes: false, parseTagValue: false, isArray: (name) => ['event', 'pick', 'comment'].includes(name) }).parse(res.text);
      const events = doc['q:quakeml'].eventParameters.event as Array<Record<string, unknown>>;
      expect(events).toHaveLength(1);
      const ev = events[0] as { '@_publicID': string; type: string; typeCertainty: string; pick: Array<{ time: { value: string }; phaseHint: string; evaluationStatus: string; evaluationMode: string; waveformID: Record<string, string> }> };
      expect(ev['@_publicID']).toBe(`smi:seisift.local/event/item/${labelledId}`);
      expect(ev.type).toBe('earthquake');
      expect(ev.typeCertainty).toBe('known');
      expect(ev.pick.map((p) => [p.phaseHint, p.time.value, p.evaluationStatus, p.evaluationMode])).toEqual([
        ['S', '2026-03-14T09:25:41.000Z', 'final', 'manual'],
        ['P', '2026-03-14T09:25:38.250Z', 'final', 'manual'],
      ]);
      expect(ev.pick[1]?.waveformID).toMatchObject({ '@_networkCode': 'XX', '@_stationCode': 'KV01', '@_locationCode': '00', '@_channelCode': 'HHZ' });
      const csv = await get(sue, `/api/supervisor/export?${q}&format=csv`).expect(200);
      expect(csv.headers['content-type']).toMatch(/text\/csv/);
      const lines = csv.text.trim().split('\r\n');
      expect(lines).toHaveLength(2);
      // A window no located event holds: its station time, empty origin and ML columns.
      const header = (lines[0] ?? '').split(',');
      const row = (lines[1] ?? '').split(',');
      const col = (name: string) => row[header.indexOf(name)];
      expect([col('event_id'), col('event_time'), col('event_time_basis'), col('event_type'), col('type_certainty'), col('evaluation_status')]).toEqual([
        `smi:seisift.local/event/item/${labelledId}`, '2026-03-14T09:25:38.250Z', 'earliest P pick', 'earthquake', 'known', 'final',
      ]);
      expect([col('origin_time'), col('latitude'), col('ml'), col('caution')]).toEqual(['', '', '', '']);
      const bad = await get(sue, '/api/supervisor/export?from=2026-03-15T00:00:00Z&to=2026-03-14T00:00:00Z');
      expect(bad.status).toBe(400);
      expect(bad.body.error.message).toBe('from: from must be before to');
      // Preliminary items are left out unless asked for.
      const prelim = await get(sue, `/api/supervisor/export?${q}&format=csv&status=preliminary`).expect(200);
      expect(prelim.text.trim().split('\r\n')).toHaveLength(1);
    });
  });

  describe('thresholds', () => {
    it('reports, applies with an audit row and re-scores nothing until asked', async () => {
      const kv05 = await ensureStation(ctx.database.db, 'KV05');
      const ev = await createItem(ctx.database.db, { station: 'KV05', withSamples: true, burstAtS: 50, windowStart: new Date('2026-03-10T10:00:00Z') });
      const noise = await createItem(ctx.database.db, { station: 'KV05', withSamples: true, windowStart: new Date('2026-03-10T11:00:00Z') });
      await labelAs(ana, ev, { eventType: 'earthquake' });
      const c = await post(ana, `/api/queue/items/${noise}/claim`, { version: 1 }).expect(200);
      await post(ana, `/api/queue/items/${noise}/dismiss`, { version: c.body.version, noiseReason: 'wind' }).expect(200);

      const report = await get(sue, `/api/supervisor/thresholds/${kv05}`).expect(200);
      expect(report.body.labelled).toEqual({ events: 1, noise: 1 });
      expect(report.body.current).toEqual({ eventZ: 3, noiseZ: 2, centroidMaxFactor: 1.5 });
      const e = report.body.currentEvaluation;
      expect(e.tp + e.fn).toBe(1);
      expect(e.fp + e.tn).toBe(1);
      expect(report.body.curve.length).toBeGreaterThan(10);
      // Replaying the stored evidence under the thresholds the items were scored with gives back the
      // flags the engine stored (server/dsp/score.ts is the one rule on both paths).
      expect(report.body.currentEvaluation).toEqual(report.body.asShown);
      const bad = await get(sue, `/api/supervisor/thresholds/${kv05}?noiseZ=5&eventZ=4`);
      expect(bad.status).toBe(400);
      expect(bad.body.error.message).toBe('noiseZ: noiseZ must not exceed eventZ');
      const proposed = await get(sue, `/api/supervisor/thresholds/${kv05}?eventZ=49`).expect(200);
      expect(proposed.body.proposedEvaluation).toMatchObject({ tp: 0, fp: 0 });

      const scoreBefore = (await item(ev)).score;
      const versionBefore = (await item(ev)).version;
      expect((await post(ana, `/api/supervisor/thresholds/${kv05}/apply`, { thresholds: { eventZ: 4, noiseZ: 2, centroidMaxFactor: 1.5 } })).status).toBe(403);
      await post(sue, `/api/supervisor/thresholds/${kv05}/apply`, { thresholds: { eventZ: 4, noiseZ: 2, centroidMaxFactor: 1.5 } }).expect(200);
      const [st] = await ctx.database.db.select().from(stations).where(eq(stations.id, kv05));
      expect((st?.profile as { thresholds: { eventZ: number } }).thresholds.eventZ).toBe(4);
      expect((await item(ev)).version).toBe(versionBefore);
      expect((await item(ev)).score).toBe(scoreBefore);
      const [applied] = await ctx.database.db.select().from(auditLog).where(eq(auditLog.action, 'thresholds.applied'));
      expect(applied?.details).toMatchObject({ before: { eventZ: 3 }, after: { eventZ: 4 }, rescored: 0 });

      const rs = await post(sue, `/api/supervisor/thresholds/${kv05}/rescore`, { from: '2026-03-10T00:00:00Z', to: '2026-03-11T00:00:00Z' }).expect(200);
      expect(rs.body.rescored).toBe(2);
      expect((await item(ev)).version).toBe(versionBefore + 1);
      const [rescored] = await ctx.database.db.select().from(auditLog).where(eq(auditLog.action, 'thresholds.rescored'));
      expect(rescored?.details).toMatchObject({ rescored: 2 });
      // The stored analysis keeps its spectra and gets the new score fields as JSON values.
      const [win] = await ctx.database.db.select({ analysis: windows.analysis }).from(windows).innerJoin(queueItems, eq(queueItems.windowId, windows.id)).where(eq(queueItems.id, ev));
      const a = win?.analysis as { reasons: unknown; score: unknown; flag: unknown; channels: Array<{ psd: { values: unknown[] } }> };
      expect(Array.isArray(a.reasons)).toBe(true);
      expect(typeof a.score).toBe('number');
      expect(a.score).toBe((await item(ev)).score);
      expect(a.flag).toBe((await item(ev)).flag);
      expect(a.channels[0]?.psd.values.length).toBeGreaterThan(100);
      // Replaying from the extract gives the same flags as the full analysis (both items readable).
      const again = await get(sue, `/api/supervisor/thresholds/${kv05}`).expect(200);
      expect(again.body.unreadable).toBe(0);
      expect(again.body.labelled).toEqual({ events: 1, noise: 1 });
    });
  });

  describe('candidate events in the database', () => {
    /**
     * Stations on a meridian 0.1° apart (11.119 km; hand-worked 6371·π/1800): allowed lag between
     * neighbours 11.119/3 + 2 = 5.706 s, two apart 22.239/3 + 2 = 9.413 s, three apart 12.119 s.
     * Arrivals (s after T): KV11 at 0, KV12 at 3, KV13 at 7 → one candidate event of 3 stations;
     * KV14 at 30 is 23 s after KV13 (allowed 5.706 s) → alone.
     */
    const codes = ['KV11', 'KV12', 'KV13', 'KV14'];
    const offsets = [0, 3, 7, 30];
    async function setUp(t0: string): Promise<number[]> {
      const ids: number[] = [];
      for (const [i, code] of codes.entries()) {
        const sid = await ensureStation(ctx.database.db, code);
        await ctx.database.db.update(stations).set({ latitude: 46 + 0.1 * i, longitude: 8 }).where(eq(stations.id, sid));
        const windowStart = new Date(Date.parse(t0));
        const id = await createItem(ctx.database.db, { station: code, windowStart });
        const [row] = await ctx.database.db.select({ windowId: queueItems.windowId }).from(queueItems).where(eq(queueItems.id, id));
        await ctx.database.db
          .update(windows)
          .set({ analysis: { leadChannel: `XX.${code}.00.HHZ`, channels: [{ id: `XX.${code}.00.HHZ`, startTime: windowStart.toISOString(), staLta: { triggers: [{ on: 20 + (offsets[i] ?? 0), off: 40 }] } }] } })
          .where(eq(windows.id, row?.windowId ?? 0));
        ids.push(id);
      }
      return ids;
    }

    it('uses the hand-worked distances', () => {
      expect(haversineKm(46, 8, 46.1, 8)).toBeCloseTo(11.119493, 5);
    });

    it('groups the same way in arrival order, reversed and shuffled, anchored at the earliest member', async () => {
      const orders = [
        [0, 1, 2, 3],
        [3, 2, 1, 0],
        [2, 0, 3, 1],
      ];
      for (const [k, order] of orders.entries()) {
        const ids = await setUp(`2026-04-0${k + 1}T08:00:00.000Z`);
        for (const i of order) await onItemsCreated({ db: ctx.database.db }, [ids[i] as number]);
        const arrivals = await ctx.database.db.select().from(itemArrivals).where(eq(itemArrivals.itemId, ids[0] as number));
        const evId = arrivals[0]?.candidateEventId;
        expect(evId, `order ${order.join(',')}`).toBeTruthy();
        const ev = await getCandidateEvent(ctx.database.db, evId as number);
        expect(ev?.anchorItemId).toBe(ids[0]);
        expect(ev?.members.map((m) => m.itemId)).toEqual(ids.slice(0, 3));
        expect(ev?.members.map((m) => m.arrival)).toEqual(['20', '23', '27'].map((s) => `2026-04-0${k + 1}T08:00:${s}.000Z`));
        const [alone] = await ctx.database.db.select().from(itemArrivals).where(eq(itemArrivals.itemId, ids[3] as number));
        expect(alone?.candidateEventId).toBeNull();
        expect(await ctx.database.db.select().from(candidateEvents).where(eq(candidateEvents.anchorItemId, ids[1] as number))).toHaveLength(0);
      }
    });

    it('reads the first trigger of a real engine analysis the same way through the database extract', async () => {
      const ws = new Date('2026-04-20T06:00:00.000Z');
      const id = await createItem(ctx.database.db, { station: 'KV01', withSamples: true, burstAtS: 50, windowStart: ws });
      await onItemsCreated({ db: ctx.database.db }, [id]);
      const [arr] = await ctx.database.db.select().from(itemArrivals).where(eq(itemArrivals.itemId, id));
      const [win] = await ctx.database.db.select({ analysis: windows.analysis }).from(windows).innerJoin(queueItems, eq(queueItems.windowId, windows.id)).where(eq(queueItems.id, id));
      expect(arr?.arrivalAt.getTime()).toBe(Math.round(firstTriggerMs(win?.analysis) ?? Number.NaN));
      // The synthetic burst starts at 50 s; the STA/LTA trigger comes on within the next 2 s.
      expect((arr?.arrivalAt.getTime() ?? 0) - ws.getTime()).toBeGreaterThanOrEqual(50_000);
      expect((arr?.arrivalAt.getTime() ?? 0) - ws.getTime()).toBeLessThan(52_000);
    });

    it('labels every member through the queue with the type only; the current item gets its whole label; each still correctable', async () => {
      const ids = await setUp('2026-04-05T08:00:00.000Z');
      await onItemsCreated({ db: ctx.database.db }, ids);
      const list = await get(ana, '/api/supervisor/candidate-events?from=2026-04-05T00:00:00Z&to=2026-04-06T00:00:00Z').expect(200);
      expect(list.body.events).toHaveLength(1);
      const evId = list.body.events[0].id;
      const current = ids[0] as number;
      // The analyst's whole form goes to the current item only.
      const full = { eventType: 'earthquake', certainty: 'known', distanceClass: 'local', note: 'clear P on the vertical', picks: [{ phase: 'P', time: '2026-04-05T08:00:20.000Z', streamId: 'XX.KV11.00.HHZ' }] };
      // Refused: a current item outside the group, a current label of another type, the old whole-label body.
      const outside = await post(ana, `/api/supervisor/candidate-events/${evId}/label`, { eventType: 'earthquake', current: { itemId: ids[3], label: full } }).expect(400);
      expect(outside.body.error.message).toMatch(/current\.itemId: item \d+ is not a member of event group/);
      const mismatch = await post(ana, `/api/supervisor/candidate-events/${evId}/label`, { eventType: 'quarry blast', current: { itemId: current, label: full } }).expect(400);
      expect(mismatch.body.error.message).toMatch(/current\.label\.eventType/);
      await post(ana, `/api/supervisor/candidate-events/${evId}/label`, { label: full }).expect(400);
      expect((await item(current)).state).toBe('new');

      const res = await post(ana, `/api/supervisor/candidate-events/${evId}/label`, { eventType: 'earthquake', current: { itemId: current, label: full } }).expect(200);
      expect(res.body.members.map((m: { result: string }) => m.result)).toEqual(['labelled', 'labelled', 'labelled']);
      const first = await item(current);
      expect(first.state).toBe('labelled');
      expect(first.label).toMatchObject({ kind: 'event', eventType: 'earthquake', certainty: 'known', distanceClass: 'local', note: 'clear P on the vertical' });
      expect((first.label as { picks: unknown[] }).picks).toHaveLength(1);
      for (const other of [ids[1], ids[2]] as number[]) {
        const it = await item(other);
        expect(it.state).toBe('labelled');
        // The type only: certainty left at "suspected", no distance, no picks, and a note saying where the type came from.
        expect(it.label).toMatchObject({ kind: 'event', eventType: 'earthquake', certainty: 'suspected', distanceClass: null, picks: [] });
        expect((it.label as { note: string }).note).toBe(`Type set for the whole event group #${evId} from item ${current}; this item's traces not yet reviewed on their own.`);
      }
      // Labelling again skips members already labelled, and says so.
      const again = await post(ana, `/api/supervisor/candidate-events/${evId}/label`, { eventType: 'quarry blast' }).expect(200);
      expect(again.body.members.map((m: { reason: string }) => m.reason)).toEqual(['already labelled', 'already labelled', 'already labelled']);
    });
  });

  describe('dashboard', () => {
    it('counts items per day per station and the flag mix, and refuses a reversed period', async () => {
      await createItem(ctx.database.db, { station: 'KV01', flag: 'likely event', createdAt: new Date('2026-05-02T10:00:00Z') });
      await createItem(ctx.database.db, { station: 'KV01', flag: 'likely noise', createdAt: new Date('2026-05-02T11:00:00Z') });
      await createItem(ctx.database.db, { station: 'KV05', flag: 'likely noise', createdAt: new Date('2026-05-03T11:00:00Z') });
      const d = await get(sue, '/api/supervisor/dashboard?from=2026-05-01T00:00:00Z&to=2026-05-04T00:00:00Z').expect(200);
      expect(d.body.days).toEqual(['2026-05-01', '2026-05-02', '2026-05-03']);
      expect(d.body.itemsPerStation).toEqual([
        { station: 'XX.KV01', counts: [0, 2, 0] },
        { station: 'XX.KV05', counts: [0, 0, 1] },
      ]);
      expect(d.body.flagMix).toEqual(expect.arrayContaining([{ flag: 'likely event', counts: [0, 1, 0] }, { flag: 'likely noise', counts: [0, 1, 1] }]));
      expect((await get(sue, '/api/supervisor/dashboard?from=2026-05-04T00:00:00Z&to=2026-05-01T00:00:00Z')).status).toBe(400);
    });
  });
});
