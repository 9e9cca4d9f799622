/**
 * Refusal messages name the bad input but quote at most MAX_QUOTED_CHARS (80) characters of it:
 * hostile inputs whose bad part is thousands of characters long (a CSV cell, a CSV time, a stream
 * id, a file name, a StationXML attribute, an API path) are refused with a message that holds no
 * run of that input longer than 80 characters, and is short overall.
 */
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { clipInput, MAX_QUOTED_CHARS, quoteInput } from '@shared/quote-input';
import { createApp } from '@server/app';
import { seedIngestToken, seedPerson, seedStation } from '@tests/faults/support/fixtures';
import { createTestContext, type TestContext } from '@tests/setup/test-app';

/** The longest run of `ch` in `text`. */
const longestRun = (text: string, ch: string) => Math.max(0, ...[...text.matchAll(new RegExp(`${ch}+`, 'g'))].map((m) => m[0].length));

describe('clipInput / quoteInput', () => {
  it('keeps short input whole, cuts long input to 80 characters saying how many more, and shows control characters', () => {
    expect(quoteInput('KV01')).toBe("'KV01'");
    const long = 'x'.repeat(1000);
    const q = clipInput(long);
    expect(longestRun(q, 'x')).toBe(MAX_QUOTED_CHARS);
    expect(q).toContain('(+920 characters)');
    expect(clipInput(`${'a'.repeat(300)}.mseed`, 80, 12)).toMatch(/^a{68}… \(\+226 characters\) …a{6}\.mseed$/);
    expect(clipInput('a\nb\u0000')).toBe('a\\u000ab\\u0000');
    // Code points, not UTF-16 units: an emoji is never split.
    expect([...clipInput('😀'.repeat(100))].filter((c) => c === '😀')).toHaveLength(80);
  });
});

describe('refusals quote at most 80 characters of the bad input (real MariaDB)', () => {
  let ctx: TestContext;
  let app: ReturnType<typeof createApp>;
  let token: string;
  let adminCookie: string;

  beforeAll(async () => {
    ctx = await createTestContext();
    app = createApp(ctx, { serveClient: false });
    token = await seedIngestToken(ctx.database.db, await seedStation(ctx.database.db, 'KV01'));
    adminCookie = (await seedPerson(ctx.database.db, { roles: ['admin'] })).cookie;
  });
  afterAll(async () => {
    await ctx.close();
  });

  const upload = (bytes: Buffer, filename: string, fields: Record<string, string> = {}) => {
    let r = request(app).post('/api/uploads').set('Authorization', `Bearer ${token}`);
    for (const [k, v] of Object.entries(fields)) r = r.field(k, v);
    return r.attach('files', bytes, filename);
  };
  const outcome = (res: { body: { files?: Array<{ message?: string }>; error?: { message: string } } }) => res.body.files?.[0]?.message ?? res.body.error?.message ?? '';
  const csv = (rows: string[]) => Buffer.from(['# stream=XX.KV01.00.HHZ', '# start=2026-03-14T10:00:00Z', 't_seconds,counts', ...rows].join('\n'));

  const cases: Array<{ what: string; run: () => ReturnType<typeof upload>; letter: string; status: number }> = [
    { what: 'a 20 000-character CSV counts cell', letter: 'Q', status: 422, run: () => upload(csv(['0,1', '0.01,2', `0.02,${'Q'.repeat(20_000)}`]), 'w.csv') },
    { what: 'a 20 000-character CSV time cell', letter: 'Z', status: 422, run: () => upload(csv(['0,1', `${'Z'.repeat(20_000)},2`]), 'w.csv') },
    { what: 'a 5 000-character stream id comment', letter: 'S', status: 422, run: () => upload(Buffer.from([`# stream=XX.${'S'.repeat(5000)}.00.HHZ`, '# start=2026-03-14T10:00:00Z', 't_seconds,counts', '0,1', '0.01,2'].join('\n')), 'w.csv') },
    { what: 'a 3 000-character file name', letter: 'F', status: 422, run: () => upload(Buffer.from('not a waveform at all'), `${'F'.repeat(3000)}.mseed`) },
  ];
  for (const c of cases) {
    it(`upload with ${c.what}: refused, message quotes ≤ 80 characters of it`, async () => {
      const res = await c.run();
      expect(res.status).toBe(c.status);
      const message = outcome(res);
      expect(message.length, message.slice(0, 200)).toBeGreaterThan(10);
      expect(longestRun(message, c.letter), message.slice(0, 300)).toBeLessThanOrEqual(MAX_QUOTED_CHARS);
      expect(message.length).toBeLessThan(400);
    });
  }

  it('StationXML with a 10 000-character schemaVersion and station code: refused, quoting ≤ 80 characters', async () => {
    const doc = (version: string, code: string) =>
      `<?xml version="1.0"?><FDSNStationXML xmlns="http://www.fdsn.org/xml/station/1" schemaVersion="${version}"><Source>t</Source><Created>2026-01-01T00:00:00Z</Created><Network code="XX"><Station code="${code}"><Latitude>46</Latitude><Longitude>11</Longitude><Elevation>1</Elevation><Site><Name>s</Name></Site><Channel code="HHZ" locationCode="00"><Latitude>oops</Latitude></Channel></Station></Network></FDSNStationXML>`;
    for (const [xml, letter] of [
      [doc('V'.repeat(10_000), 'KV01'), 'V'],
      [doc('1.2', 'C'.repeat(10_000)), 'C'],
    ] as const) {
      const res = await request(app).post('/api/stations/import/preview').set('Cookie', adminCookie).set('Origin', 'http://127.0.0.1').set('Host', '127.0.0.1').attach('file', Buffer.from(xml), 'x.xml');
      expect(res.status).toBe(422);
      expect(longestRun(res.body.error.message, letter), res.body.error.message.slice(0, 300)).toBeLessThanOrEqual(MAX_QUOTED_CHARS);
    }
  });

  it('an unknown API path of 6 000 characters: 404 quoting ≤ 80 characters of it', async () => {
    const res = await request(app).get(`/api/${'P'.repeat(6000)}`);
    expect(res.status).toBe(404);
    expect(longestRun(res.body.error.message, 'P')).toBeLessThanOrEqual(MAX_QUOTED_CHARS);
  });
});
