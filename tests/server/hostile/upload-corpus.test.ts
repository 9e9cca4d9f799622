import { request as httpRequest } from 'node:http';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startServer, type RunningServer } from '@server/index';
import { createTestContext, type TestContext } from '@tests/setup/test-app';
import { ingestRowCounts, seedIngestToken, seedStation } from '@tests/faults/support/fixtures';
import { eq } from 'drizzle-orm';
import { decodeStoredSamples } from '@server/db/samples-codec';
import { windowChannels, windows } from '@server/db/schema/uploads';
import { decodeWaveform } from '@server/formats/decode';
import { expectedReason, makeHostileCorpus, makeRepairableCorpus } from '@tests/fixtures/hostile/make-corpus';
import { makeWindowFile } from '@tests/faults/support/windows';

/**
 * The hostile corpus through POST /api/uploads of a real server (HTTP on loopback, a station
 * ingest token): every file answers 4xx with a reason naming the problem (the decoder's message,
 * see expectedReason), no row appears in uploads / windows / window_channels / window_features /
 * queue_items / change_log, and the server keeps answering. Then bodies that break the limits
 * (SEISIFT_MAX_UPLOAD_BYTES, SEISIFT_MAX_UPLOAD_FILES) are streamed at it: each is refused with
 * 413 long before it is sent in full, and the server's memory stays flat.
 */

const MB = 1024 * 1024;
const LIMIT_BYTES = 25 * MB; // the default SEISIFT_MAX_UPLOAD_BYTES
const LIMIT_FILES = 20; // the default SEISIFT_MAX_UPLOAD_FILES

interface StreamResult {
  status: number;
  body: string;
  bytesSentAtAnswer: number;
  rssGrowthMb: number;
}

/**
 * Sends a multipart body of up to `totalBytes`, written in 64 KiB chunks as fast as the socket
 * takes them, and stops writing as soon as the response status arrives.
 * @param parts `one-file`: one file part of totalBytes; `many-files`: 1 KiB file parts until totalBytes
 */
function streamUpload(url: string, token: string, opts: { parts: 'one-file' | 'many-files'; totalBytes: number; declareLength: boolean }): Promise<StreamResult> {
  const boundary = 'hostileBoundary7d1e';
  const partHead = (i: number) => Buffer.from(`--${boundary}\r\nContent-Disposition: form-data; name="files"; filename="big-${i}.mseed"\r\nContent-Type: application/octet-stream\r\n\r\n`);
  const chunk = Buffer.alloc(64 * 1024, 0x41);
  const small = Buffer.alloc(1024, 0x42);
  const rss0 = process.memoryUsage().rss;
  let peakRss = rss0;
  return new Promise((resolve, reject) => {
    const target = new URL('/api/uploads', url);
    const headers: Record<string, string | number> = { Authorization: `Bearer ${token}`, 'Content-Type': `multipart/form-data; boundary=${boundary}` };
    if (opts.declareLength) headers['Content-Length'] = opts.totalBytes;
    const req = httpRequest({ method: 'POST', hostname: target.hostname, port: target.port, path: target.pathname, headers });
    let sent = 0;
    let answered = false;
    let sentAtAnswer = 0;
    let partIndex = 0;
    req.on('response', (res) => {
      answered = true;
      sentAtAnswer = sent;
      let body = '';
      res.setEncoding('utf8');
      res.on('data', (d: string) => (body += d));
      res.on('end', () => {
        req.destroy();
        resolve({ status: res.statusCode ?? 0, body, bytesSentAtAnswer: sentAtAnswer, rssGrowthMb: (peakRss - rss0) / MB });
      });
    });
    req.on('error', (err) => {
      // The server may close the socket after answering; only an error before any answer counts.
      if (!answered) reject(err);
    });
    const write = (buf: Buffer): boolean => {
      sent += buf.length;
      return req.write(buf);
    };
    const pump = () => {
      while (!answered && sent < opts.totalBytes) {
        peakRss = Math.max(peakRss, process.memoryUsage().rss);
        let ok: boolean;
        if (opts.parts === 'one-file') {
          ok = sent === 0 ? write(partHead(0)) : write(chunk);
        } else {
          ok = write(Buffer.concat([partHead(partIndex++), small, Buffer.from('\r\n')]));
        }
        if (!ok) {
          req.once('drain', pump);
          return;
        }
      }
      if (!answered) req.end();
    };
    pump();
  });
}

describe('hostile uploads', () => {
  let ctx: TestContext;
  let running: RunningServer;
  let token: string;

  beforeAll(async () => {
    ctx = await createTestContext();
    running = await startServer(ctx, { host: '127.0.0.1', port: 0, serveClient: false });
    const stationId = await seedStation(ctx.database.db, 'KV01');
    token = await seedIngestToken(ctx.database.db, stationId);
  });

  afterAll(async () => {
    await running?.close();
    await ctx?.close();
  });

  const post = async (files: Array<{ name: string; bytes: Uint8Array }>) => {
    const form = new FormData();
    for (const f of files) form.append('files', new Blob([Buffer.from(f.bytes)]), f.name);
    const res = await fetch(`${running.url}/api/uploads`, { method: 'POST', headers: { Authorization: `Bearer ${token}` }, body: form });
    return { status: res.status, body: (await res.json()) as unknown };
  };

  it('refuses every corpus file with 4xx and its reason, writes no row, and keeps serving', async () => {
    const before = await ingestRowCounts(ctx.database.pool);
    const corpus = makeHostileCorpus();
    for (const c of corpus) {
      const { status, body } = await post([{ name: c.filename, bytes: c.bytes }]);
      expect(status, `${c.name}: ${JSON.stringify(body)}`).toBeGreaterThanOrEqual(400);
      expect(status, `${c.name}: ${JSON.stringify(body)}`).toBeLessThan(500);
      const text = JSON.stringify(body);
      const file = (body as { files?: Array<{ status?: string; message?: string }> }).files?.[0];
      const message = file?.message ?? (body as { error?: { message?: string } }).error?.message ?? '';
      expect(message.length, `${c.name}: no reason in ${text}`).toBeGreaterThan(10);
      const want = expectedReason[c.name];
      if (c.refusedBy === 'decoder') {
        expect(file?.status, c.name).toBe('rejected');
        expect(want, `no expected reason for ${c.name}`).toBeDefined();
        if (want) expect(message, c.name).toMatch(want);
      }
    }
    // All of them at once in one request (each file gets its own refusal).
    const all = await post(corpus.slice(0, LIMIT_FILES).map((c) => ({ name: c.filename, bytes: c.bytes })));
    expect(all.status).toBeGreaterThanOrEqual(400);
    expect(all.status).toBeLessThan(500);
    expect((all.body as { files: unknown[] }).files).toHaveLength(LIMIT_FILES);

    expect(await ingestRowCounts(ctx.database.pool)).toEqual(before);
    const health = await fetch(`${running.url}/api/health`);
    expect(health.status).toBe(200);
    // And a good file is still accepted afterwards (the server is not wedged).
    const good = await post([{ name: 'good.mseed', bytes: makeWindowFile('KV01', 1_781_000_000_000_000) }]);
    expect(good.status).toBe(201);
  }, 120_000);

  it('accepts every repairable file (repeated record, re-sent overlap, empty record, zero padding, quoted CSV, CSV named .mseed) with its clean twin\'s samples at their times and the decoder\'s note in the QC findings', async () => {
    for (const c of makeRepairableCorpus()) {
      const { status, body } = await post([{ name: c.filename, bytes: c.bytes }]);
      expect(status, `${c.name}: ${JSON.stringify(body)}`).toBe(201);
      const uploadId = (body as { files: Array<{ uploadId?: number }> }).files[0]?.uploadId;
      expect(uploadId, c.name).toBeDefined();
      const rows = await ctx.database.db
        .select({ streamId: windowChannels.streamId, startTimeUs: windowChannels.startTimeUs, rate: windowChannels.sampleRateHz, count: windowChannels.sampleCount, samples: windowChannels.samples, qc: windowChannels.qc })
        .from(windowChannels)
        .innerJoin(windows, eq(windows.id, windowChannels.windowId))
        .where(eq(windows.uploadId, uploadId ?? -1));
      const [clean] = decodeWaveform(c.clean, { filename: c.cleanFilename });
      expect(rows.map((r) => [r.streamId, r.startTimeUs, r.rate, r.count]), c.name).toEqual([[clean?.id, clean?.startTimeUs, clean?.sampleRateHz, clean?.samples.length]]);
      expect(Array.from(decodeStoredSamples(rows[0]?.samples ?? new Uint8Array(0))), c.name).toEqual(Array.from(clean?.samples ?? []));
      const codes = (Array.isArray(rows[0]?.qc) ? (rows[0]?.qc as Array<{ code: string }>) : []).map((f) => f.code);
      for (const note of c.notes) expect(codes, c.name).toContain(note);
      expect(codes.filter((k) => k.startsWith('duplicate') || k === 'empty-record'), c.name).toEqual(c.notes);
    }
  }, 120_000);

  it('refuses a 200 MB streamed file after the 25 MB limit, not after reading it all', async () => {
    const before = await ingestRowCounts(ctx.database.pool);
    const r = await streamUpload(running.url, token, { parts: 'one-file', totalBytes: 200 * MB, declareLength: false });
    console.log(`hostile: 200 MB chunked file → ${r.status} after ${(r.bytesSentAtAnswer / MB).toFixed(1)} MB sent; process (server + client) RSS growth ${r.rssGrowthMb.toFixed(0)} MB`);
    expect(r.status).toBe(413);
    expect(r.body).toContain('SEISIFT_MAX_UPLOAD_BYTES');
    // Answered after about the limit (plus socket buffers), far before 200 MB.
    expect(r.bytesSentAtAnswer).toBeGreaterThan(LIMIT_BYTES * 0.9);
    expect(r.bytesSentAtAnswer).toBeLessThan(LIMIT_BYTES + 16 * MB);
    expect(r.rssGrowthMb).toBeLessThan(150);
    expect(await ingestRowCounts(ctx.database.pool)).toEqual(before);
  }, 60_000);

  it('refuses a body whose declared length exceeds every limit at once, before reading it', async () => {
    // 20 files × (25 MB + 64 KiB) is the most a request may hold; 600 MB declared is refused from the headers.
    const r = await streamUpload(running.url, token, { parts: 'one-file', totalBytes: 600 * MB, declareLength: true });
    console.log(`hostile: Content-Length 600 MB → ${r.status} after ${(r.bytesSentAtAnswer / MB).toFixed(2)} MB sent`);
    expect(r.status).toBe(413);
    expect(r.body).toContain('SEISIFT_MAX_UPLOAD_FILES');
    expect(r.bytesSentAtAnswer).toBeLessThan(8 * MB);
  }, 60_000);

  it('refuses a declared 200 MB file after the 25 MB limit', async () => {
    const r = await streamUpload(running.url, token, { parts: 'one-file', totalBytes: 200 * MB, declareLength: true });
    console.log(`hostile: Content-Length 200 MB file → ${r.status} after ${(r.bytesSentAtAnswer / MB).toFixed(2)} MB sent`);
    expect(r.status).toBe(413);
    expect(r.body).toContain('SEISIFT_MAX_UPLOAD_BYTES');
    expect(r.bytesSentAtAnswer).toBeLessThan(LIMIT_BYTES + 16 * MB);
  }, 60_000);

  it('refuses a stream of thousands of files after the 20th', async () => {
    const before = await ingestRowCounts(ctx.database.pool);
    const r = await streamUpload(running.url, token, { parts: 'many-files', totalBytes: 20 * MB, declareLength: false });
    console.log(`hostile: stream of 1 KiB files → ${r.status} after ${(r.bytesSentAtAnswer / 1024).toFixed(0)} KiB sent`);
    expect(r.status).toBe(413);
    expect(r.body).toContain('SEISIFT_MAX_UPLOAD_FILES');
    // 21 parts of ~1.2 kB reach the server; what the client wrote beyond that sat in socket buffers.
    expect(r.bytesSentAtAnswer).toBeLessThan(8 * MB);
    expect(await ingestRowCounts(ctx.database.pool)).toEqual(before);
    const health = await fetch(`${running.url}/api/health`);
    expect(health.status).toBe(200);
  }, 60_000);
});
