/**
 * The local fake SMTP server (smtp-server) fed by nodemailer over real SMTP on loopback: what it
 * stores, that it listens on 127.0.0.1 only, and that the mailbox API exists only while it is used.
 */
import { desc } from 'drizzle-orm';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createApp } from '@server/app';
import { mailMessages } from '@server/db/schema/mail-messages';
import { seedDemo } from '@server/db/seed-demo';
import { createMailer } from '@server/email/mailer';
import { createSessionStore } from '@server/auth/sessions';
import { eq } from 'drizzle-orm';
import { users } from '@server/db/schema/users';
import { createTestContext, type TestContext } from '@tests/setup/test-app';

describe('fake SMTP server', () => {
  let ctx: TestContext;
  beforeAll(async () => {
    ctx = await createTestContext();
  });
  afterAll(async () => {
    await ctx.close();
  });

  it('listens on loopback and stores each message with envelope, headers and decoded bodies', async () => {
    expect(ctx.fakeSmtp.host).toBe('127.0.0.1');
    expect(ctx.mailer.kind).toBe('fake');
    await ctx.mailer.send({ to: 'kv-operator@kestrel.example', subject: 'Kestrel Valley — test', text: 'line one\nline two', html: '<p>line one</p>' });
    const [row] = await ctx.database.db.select().from(mailMessages).orderBy(desc(mailMessages.id)).limit(1);
    expect(row).toMatchObject({ envelopeTo: ['kv-operator@kestrel.example'], envelopeFrom: 'seisift@kestrel.example', subject: 'Kestrel Valley — test', textBody: 'line one\nline two', htmlBody: '<p>line one</p>' });
    expect(row!.raw).toMatch(/^[\s\S]*Subject: /);
    expect(row!.sizeBytes).toBe(Buffer.byteLength(row!.raw));
  });

  it('the mailbox API answers 404 mailbox_off when mail goes to a real SMTP server', async () => {
    await seedDemo(ctx.database.db, { demoPassword: 'kestrel-demo-pass' });
    const [admin] = await ctx.database.db.select({ id: users.id }).from(users).where(eq(users.email, 'admin@kestrel.example'));
    const session = await createSessionStore(ctx.database.db, { idleHours: 1 }).create(admin!.id, { ipAddress: null, userAgent: null });
    const realish = { ...ctx, mailer: createMailer({ url: ctx.fakeSmtp.url, from: ctx.env.MAIL_FROM, kind: 'smtp' }) };
    const res = await request(createApp(realish, { serveClient: false })).get('/api/admin/mailbox').set('Cookie', `seisift_session=${session.id}`);
    expect(res.status).toBe(404);
    expect(res.body.error.code).toBe('mailbox_off');
    const me = await request(createApp(realish, { serveClient: false })).get('/api/auth/me').set('Cookie', `seisift_session=${session.id}`);
    expect(me.body.mailbox).toBe(false);
    realish.mailer.close();
  });
});
