/**
 * The ingest benchmarks' synthetic inputs and process meters, shared by `bench:ingest`'s single
 * process run (ingest.ts) and its multi-instance comparison (ingest-cluster.ts). Test inputs, not
 * check values.
 */
import { createHash, randomBytes } from 'node:crypto';
import { readFileSync } from 'node:fs';
import { request as httpRequest, type Agent } from 'node:http';
import { defaultProcessingProfile } from '@shared/schemas/processing-profile';
import { createSessionStore, sessionCookieName } from '@server/auth/sessions';
import type { Database } from '@server/db/client';
import { channels, ingestTokens, stations } from '@server/db/schema/stations';
import { userRoles, users } from '@server/db/schema/users';
import { encodeMiniSeed2 } from '@server/formats/mseed2-writer';
import { WebSocket } from 'ws';
import { z } from 'zod';

/** The bench stations (invented, network XX). */
export const CODES = ['KV01', 'KV02', 'KV03', 'KV04', 'KV05', 'KV06'];
/** The bench windows' start, µs since the epoch. */
export const BASE_START_US = 1_784_000_000_000_000;
/** MiniSEED record length of the bench files, bytes. */
export const RECORD = 4096;

/** Deterministic noise (32-bit LCG, Numerical Recipes constants; common practice) plus a 0.2 Hz swell. */
export function channelSamples(seed: number, n: number): Int32Array {
  let s = seed >>> 0;
  const out = new Int32Array(n);
  for (let i = 0; i < n; i++) {
    s = (Math.imul(s, 1664525) + 1013904223) >>> 0;
    out[i] = Math.round(400 * (s / 2 ** 32 - 0.5) + 150 * Math.sin((2 * Math.PI * 0.2 * i) / 100));
  }
  return out;
}

/** One station's 120 s HHZ/HHN/HHE window as MiniSEED 2 Steim-2, starting at BASE_START_US. */
export function baseWindow(code: string, seed: number): Uint8Array {
  const parts = ['HHZ', 'HHN', 'HHE'].map((channel, k) =>
    encodeMiniSeed2({ network: 'XX', station: code, location: '00', channel, sampleRateHz: 100, startTimeUs: BASE_START_US, samples: channelSamples(seed * 7 + k, 12_000) }, { encoding: 'steim2', recordLength: RECORD }),
  );
  return Buffer.concat(parts);
}

/**
 * A copy of a big-endian MiniSEED 2 file with every record's start time (BTIME at bytes 20–29 of
 * the fixed header: year, day of year, hour, minute, second, unused, 0.0001 s; FDSN SEED manual 2.4
 * ch. 8) moved by `deltaS` whole seconds. Samples, blockettes and sub-second parts are untouched.
 */
export function shiftStart(file: Uint8Array, deltaS: number): Uint8Array {
  const out = Uint8Array.from(file);
  const v = new DataView(out.buffer);
  for (let at = 0; at + 48 <= out.length; at += RECORD) {
    const year = v.getUint16(at + 20);
    const day = v.getUint16(at + 22);
    const ms = Date.UTC(year, 0, 1) + (day - 1) * 86_400_000 + v.getUint8(at + 24) * 3_600_000 + v.getUint8(at + 25) * 60_000 + v.getUint8(at + 26) * 1000 + deltaS * 1000;
    const d = new Date(ms);
    const y = d.getUTCFullYear();
    v.setUint16(at + 20, y);
    v.setUint16(at + 22, Math.floor((ms - Date.UTC(y, 0, 1)) / 86_400_000) + 1);
    v.setUint8(at + 24, d.getUTCHours());
    v.setUint8(at + 25, d.getUTCMinutes());
    v.setUint8(at + 26, d.getUTCSeconds());
  }
  return out;
}

/**
 * CPU seconds (user + system, all threads) a process has used so far, from fields 14 and 15 of
 * /proc/PID/stat in clock ticks (proc(5); 100 ticks per second on Linux x86_64, common practice).
 * NaN when the process is gone.
 */
export function cpuSeconds(pid: number): number {
  try {
    const stat = readFileSync(`/proc/${pid}/stat`, 'utf8');
    const fields = stat.slice(stat.lastIndexOf(')') + 2).split(' ');
    return (Number(fields[11]) + Number(fields[12])) / 100;
  } catch {
    return NaN;
  }
}

/**
 * The bench network in a fresh database: the {@link CODES} stations with HHZ/HHN/HHE and an ingest
 * token each, and `analysts` analysts with a session each (for the websocket clients).
 * @returns the tokens by station code and the analysts' session cookies
 */
export async function seedBenchNetwork(db: Database, analysts: number): Promise<{ tokens: Map<string, string>; cookies: string[] }> {
  const now = new Date();
  const tokens = new Map<string, string>();
  for (const code of CODES) {
    const [res] = await db.insert(stations).values({ network: 'XX', code, name: `Kestrel Valley ${code}`, latitude: 46.5, longitude: 8.1, elevationM: 900, profile: defaultProcessingProfile, createdAt: now, updatedAt: now });
    for (const cha of ['HHZ', 'HHN', 'HHE']) await db.insert(channels).values({ stationId: res.insertId, location: '00', code: cha, sampleRateHz: 100, createdAt: now, updatedAt: now });
    const token = `kvi_${randomBytes(24).toString('base64url')}`;
    await db.insert(ingestTokens).values({ stationId: res.insertId, label: 'bench', tokenHash: createHash('sha256').update(token).digest('hex'), createdAt: now });
    tokens.set(code, token);
  }
  const sessions = createSessionStore(db, { idleHours: 24 });
  const cookies: string[] = [];
  for (let i = 0; i < analysts; i++) {
    const id = `bench-analyst-${i}`;
    await db.insert(users).values({ id, email: `${id}@kestrel.example`, displayName: `Bench analyst ${i}`, passwordHash: null, active: true, createdAt: now, updatedAt: now });
    await db.insert(userRoles).values({ userId: id, role: 'analyst' });
    cookies.push(`${sessionCookieName}=${(await sessions.create(id, { ipAddress: '127.0.0.1', userAgent: 'bench:ingest' })).id}`);
  }
  return { tokens, cookies };
}

/**
 * POSTs one file to `base`/api/uploads as multipart/form-data (RFC 7578) with a station's ingest
 * token, as an acquisition script would; the body is written by hand, so the load generator costs
 * as little as it can on the cores it shares with the server.
 * @returns the answer's status and body
 */
export function postUpload(agent: Agent, base: string, token: string, filename: string, file: Uint8Array): Promise<{ status: number; body: string }> {
  return new Promise((ok, fail) => {
    const u = new URL(base);
    const boundary = `seisift-bench-${randomBytes(8).toString('hex')}`;
    const head = Buffer.from(`--${boundary}\r\nContent-Disposition: form-data; name="files"; filename="${filename}"\r\nContent-Type: application/octet-stream\r\n\r\n`);
    const tail = Buffer.from(`\r\n--${boundary}--\r\n`);
    const req = httpRequest(
      { agent, host: u.hostname, port: u.port, method: 'POST', path: '/api/uploads', headers: { Authorization: `Bearer ${token}`, 'Content-Type': `multipart/form-data; boundary=${boundary}`, 'Content-Length': head.length + file.length + tail.length } },
      (res) => {
        const chunks: Buffer[] = [];
        res.on('data', (c: Buffer) => chunks.push(c));
        res.on('end', () => ok({ status: res.statusCode ?? 0, body: Buffer.concat(chunks).toString('utf8') }));
        res.on('error', fail);
      },
    );
    req.on('error', fail);
    req.write(head);
    req.write(file);
    req.end(tail);
  });
}

/**
 * Upload → socket latency: for every item of every measured upload, the time from the upload's
 * start to the LAST socket that heard of it (ms, sorted), and how many (item, socket) pairs never
 * arrived. `arrivals` holds one map per socket, item id → arrival time (same clock as `sentAt`).
 */
export function arrivalLatencies(measured: ReadonlyArray<{ sentAt: number; itemIds: readonly number[] }>, arrivals: ReadonlyArray<ReadonlyMap<number, number>>): { toAll: number[]; missing: number } {
  const toAll: number[] = [];
  let missing = 0;
  for (const s of measured) {
    for (const id of s.itemIds) {
      let last = -Infinity;
      for (const m of arrivals) {
        const t = m.get(id);
        if (t === undefined) missing++;
        else last = Math.max(last, t);
      }
      if (last > -Infinity) toAll.push(last - s.sentAt);
    }
  }
  toAll.sort((a, b) => a - b);
  return { toAll, missing };
}

/** Only what the measurement needs of a hub message (the full shape is the hub tests' job). */
const benchMessageSchema = z.object({ type: z.string(), changes: z.array(z.object({ resource: z.string(), kind: z.string(), id: z.number() })).optional() });

/**
 * Opens one websocket per cookie (client i on `baseUrls[i % length]`) and resolves once every one
 * has said hello. `arrivals[i]` maps item id → arrival time (performance.now()) of its "created"
 * change on client i; `close()` terminates them all. Parsing is kept to the fields above: 20
 * clients on the same two cores as the server should cost it as little as browsers elsewhere.
 */
export async function openArrivalSockets(baseUrls: readonly string[], cookies: readonly string[]): Promise<{ arrivals: Array<Map<number, number>>; close: () => void }> {
  const arrivals: Array<Map<number, number>> = [];
  const sockets: WebSocket[] = [];
  const close = () => {
    for (const ws of sockets) ws.terminate();
  };
  await Promise.all(
    cookies.map(
      (cookie, i) =>
        new Promise<void>((ok, fail) => {
          const seen = new Map<number, number>();
          arrivals[i] = seen;
          const url = baseUrls[i % baseUrls.length] ?? '';
          const ws = new WebSocket(`${url.replace(/^http/, 'ws')}/ws`, { headers: { Cookie: cookie, Origin: url } });
          sockets.push(ws);
          ws.on('message', (data: Buffer) => {
            const t = performance.now();
            const msg = benchMessageSchema.parse(JSON.parse(data.toString('utf8')));
            if (msg.type === 'hello') ok();
            if (msg.type === 'changes') for (const c of msg.changes ?? []) if (c.resource === 'item' && c.kind === 'created') seen.set(c.id, t);
          });
          ws.on('error', fail);
          ws.on('close', (code) => fail(new Error(`websocket ${i} closed (${code})`)));
        }),
    ),
  ).catch((err: unknown) => {
    close();
    throw err;
  });
  return { arrivals, close };
}
