import { execFile } from 'node:child_process';
import { mkdtemp, readFile, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { promisify } from 'node:util';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { uploadResponseSchema } from '@shared/schemas/upload';
import { startServer, type RunningServer } from '@server/index';
import { encodeMiniSeed2 } from '@server/formats/mseed2-writer';
import { createStation, createToken, upsertChannel, type Actor } from '@server/features/stations/station-registry';
import { createTestContext, type TestContext } from '@tests/setup/test-app';

const run = promisify(execFile);

/** The README's scripted-ingest line, run with the real curl against a real server. */
describe('README curl line', () => {
  let ctx: TestContext;
  let running: RunningServer;
  let dir: string;
  let secret: string;

  beforeAll(async () => {
    ctx = await createTestContext();
    const system: Actor = { userId: null, label: 'test', ipAddress: null };
    const kv01 = await createStation(ctx.database.db, { network: 'XX', code: 'KV01', name: 'Kestrel Valley north ridge', latitude: 46.31, longitude: 11.04, elevationM: 1240 }, system);
    await upsertChannel(ctx.database.db, kv01, { location: '00', code: 'HHZ', sampleRateHz: 100 }, system);
    secret = (await createToken(ctx.database.db, kv01, 'vault PC', system)).secret;
    running = await startServer(ctx, { host: '127.0.0.1', port: 0, serveClient: false });
    dir = await mkdtemp(join(tmpdir(), 'seisift-curl-'));
    const samples = Int32Array.from({ length: 6000 }, (_, i) => Math.round(400 * Math.sin(i / 4)));
    // A CSV of relative seconds, without # stream= or # start= lines (they come as fields).
    await writeFile(join(dir, 'kv01.csv'), ['t_seconds,counts', ...Array.from({ length: 6000 }, (_, i) => `${(i / 100).toFixed(2)},${Math.round(300 * Math.cos(i / 5))}`)].join('\n'));
    await writeFile(join(dir, 'XX.KV01.mseed'), encodeMiniSeed2({ network: 'XX', station: 'KV01', location: '00', channel: 'HHZ', sampleRateHz: 100, startTimeUs: Date.UTC(2026, 2, 14, 9, 26) * 1000, samples }, { encoding: 'steim2' }));
  });
  afterAll(async () => {
    await running.close();
    await ctx.close();
    await rm(dir, { recursive: true, force: true });
  });

  it('uploads with the token exactly as documented', async () => {
    // curl -H "Authorization: Bearer $TOKEN" -F "files=@XX.KV01.mseed" http://127.0.0.1:3000/api/uploads
    const { stdout } = await run('curl', ['-s', '-w', '\n%{http_code}', '-H', `Authorization: Bearer ${secret}`, '-F', 'files=@XX.KV01.mseed', `${running.url}/api/uploads`], { cwd: dir });
    const lines = stdout.trimEnd().split('\n');
    const code = lines.pop();
    expect(code).toBe('201');
    const body = uploadResponseSchema.parse(JSON.parse(lines.join('\n')));
    expect(body.files[0]).toMatchObject({ filename: 'XX.KV01.mseed', status: 'created', httpStatus: 201 });
  });

  it('uploads a relative-time CSV with streamId and startTime fields exactly as documented', async () => {
    // curl -H "Authorization: Bearer $TOKEN" -F "streamId=XX.KV01.00.HHZ" -F "startTime=2026-03-14T09:26:00Z" -F "files=@kv01.csv" http://127.0.0.1:3000/api/uploads
    const readme = await readFile(join(import.meta.dirname, '../../../../README.md'), 'utf8');
    expect(readme).toContain('curl -H "Authorization: Bearer $TOKEN" -F "streamId=XX.KV01.00.HHZ" -F "startTime=2026-03-14T09:26:00Z" -F "files=@kv01.csv" http://127.0.0.1:3000/api/uploads');
    const { stdout } = await run('curl', ['-s', '-w', '\n%{http_code}', '-H', `Authorization: Bearer ${secret}`, '-F', 'streamId=XX.KV01.00.HHZ', '-F', 'startTime=2026-03-14T09:26:00Z', '-F', 'files=@kv01.csv', `${running.url}/api/uploads`], { cwd: dir });
    const lines = stdout.trimEnd().split('\n');
    expect(lines.pop()).toBe('201');
    const body = uploadResponseSchema.parse(JSON.parse(lines.join('\n')));
    expect(body.files[0]).toMatchObject({ filename: 'kv01.csv', status: 'created', httpStatus: 201 });
    expect(body.files[0]?.items?.[0]?.windowStart).toBe('2026-03-14T09:26:00.000Z');
  });
});
