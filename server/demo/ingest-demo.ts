/**
 * The `npm start` demo step: ingests the demo windows of demo-waveforms/ through the real ingest
 * service (decode → analysis → upload, window, queue item, audit and change-log rows), each file as
 * its station sends it (with a per-station ingest token labelled "demo seed"), in two steps:
 * 1. The stations' noise history (manifest reason `history`: routine windows of the days before the
 *    demo day), each dismissed at once by the demo analyst through the real queue services (claim,
 *    then dismiss with the noise reason the generator knows; audit rows are written), so that every
 *    station has its own dismissed-noise baseline (server/features/stations/station-baseline.ts).
 * 2. The demo day, in time order, scored at ingest against that baseline; the demo analyst works a
 *    handful of its items as they arrive — only items this run created: a few labelled (earthquake,
 *    quarry blast), a few dismissed as noise, two escalated — so a later window of a repeating source
 *    is matched at ingest against a template whose label is already known (its flag says what it
 *    resembles), as on a station's ordinary day.
 * Idempotent: files whose SHA-256 is already stored are skipped, so a second start adds nothing; a
 * history item a broken earlier run left undismissed (still `new`) is dismissed on the next.
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { and, eq, inArray, isNull } from 'drizzle-orm';
import { z } from 'zod';
import { eventLabelSchema, noiseReasons, type EventLabelInput, type NoiseReason } from '@shared/schemas/label';
import type { Database } from '@server/db/client';
import { queueItems } from '@server/db/schema/queue-items';
import { ingestTokens, stations } from '@server/db/schema/stations';
import { uploads, windows } from '@server/db/schema/uploads';
import { users } from '@server/db/schema/users';
import type { AnalysisPool } from '@server/jobs/analysis-pool';
import type { Logger } from '@server/logger';
import { ingestFile, sha256Hex, type IngestCaller } from '@server/features/ingest/ingest-upload';
import { claimItem, dismissItem, escalateItem, labelItem, type EscalationListener, type QueuePerson } from '@server/features/queue/queue-transitions';
import { createToken, type Actor } from '@server/features/stations/station-registry';
import { prepareDemoNetwork } from './demo-events';
import { DEMO_WAVEFORMS_DIR } from './generate-waveforms';

/** Label of the per-station ingest tokens the demo seed uploads with. */
export const DEMO_SEED_TOKEN_LABEL = 'demo seed (npm start)';
/** The demo user who works the handful of items. */
export const DEMO_ANALYST_EMAIL = 'analyst@kestrel.example';

const manifestSchema = z.object({
  files: z.array(
    z.object({
      file: z.string().min(1),
      station: z.string().regex(/^KV0[1-6]$/u),
      start: z.string(),
      streams: z.array(z.string()),
      reason: z.enum(['routine', 'trigger', 'manual', 'history']),
      /** History windows: the noise reason they are dismissed with. */
      noiseReason: z.enum(noiseReasons).optional(),
      events: z.array(z.object({ id: z.string(), type: z.string(), p: z.string(), s: z.string(), hypocentralKm: z.number() })),
    }),
  ),
});

/** A parsed demo manifest. */
export type DemoIngestManifest = z.infer<typeof manifestSchema>;

/**
 * Reads and validates demo-waveforms/manifest.json.
 * @throws Error naming the file and the first problem when it is missing or malformed
 */
export function readDemoManifest(dir: string = DEMO_WAVEFORMS_DIR): DemoIngestManifest {
  const path = join(dir, 'manifest.json');
  let raw: unknown;
  try {
    raw = JSON.parse(readFileSync(path, 'utf8'));
  } catch (err) {
    throw new Error(`demo manifest ${path} cannot be read (${err instanceof Error ? err.message : String(err)}); run npm run demo:generate`);
  }
  const parsed = manifestSchema.safeParse(raw);
  if (!parsed.success) {
    const issue = parsed.error.issues[0];
    throw new Error(`demo manifest ${path}: ${issue?.path.join('.') ?? ''}: ${issue?.message ?? 'invalid'}`);
  }
  return parsed.data;
}

/** What the demo ingest needs (the same pieces the upload route uses). */
export interface DemoIngestDeps {
  db: Database;
  pool: AnalysisPool;
  notify: () => void;
  logger: Logger;
  /** Run after each escalation (the app's escalation hooks: inbox entries and e-mail). */
  escalationListeners?: readonly EscalationListener[];
}

/** What one run did. */
export interface DemoIngestReport {
  /** Waveform files in the manifest. */
  files: number;
  /** Files stored by this run. */
  created: number;
  /** Files already stored (skipped by SHA-256, or answered `duplicate` by the service). */
  duplicates: number;
  /** Files the service refused, with its message (should be none). */
  rejected: { filename: string; message: string }[];
  /** Queue items created by this run. */
  items: number;
  /** History items the demo analyst dismissed in this run (the stations' noise history). */
  historyDismissed: number;
  labelled: number;
  dismissed: number;
  escalated: number;
  /** The demo network set up before the windows came in (`prepareDemoNetwork`). */
  network: { responses: number; modelSet: boolean };
  /** Wall time, s. */
  seconds: number;
}

const seedActor: Actor = { userId: null, label: 'npm start demo seed', ipAddress: null };

/** The station's demo-seed ingest token as an ingest principal, created once. */
async function seedCaller(db: Database, stationId: number): Promise<IngestCaller> {
  const [row] = await db
    .select({ id: ingestTokens.id, label: ingestTokens.label })
    .from(ingestTokens)
    .where(and(eq(ingestTokens.stationId, stationId), eq(ingestTokens.label, DEMO_SEED_TOKEN_LABEL), isNull(ingestTokens.revokedAt)));
  // The secret is never needed: the seed calls the service directly, as the route does after
  // resolving a Bearer token to this principal.
  const token = row ?? (await createToken(db, stationId, DEMO_SEED_TOKEN_LABEL, seedActor)).token;
  return { kind: 'ingest', ingest: { tokenId: token.id, stationId, label: token.label }, ipAddress: null };
}

/** The file name as uploaded (no folder), e.g. `XX.KV03.2026-03-14T09-26-40.mseed`. */
function uploadName(path: string): string {
  return path.slice(path.lastIndexOf('/') + 1);
}

/** Analyst's note on a dismissed history window, by noise reason (invented, for the demo). */
const HISTORY_NOTES: Record<NoiseReason, string> = {
  traffic: 'Vehicle passes on the valley highway.',
  wind: 'Wind gusts.',
  machinery: 'Pumping station running.',
  'instrument glitch': 'Digitiser glitch.',
  'unknown noise': 'Ordinary site noise, nothing in particular.',
};

/** What the demo analyst does with an item, by file and event (invented, for the demo). */
type DemoAction =
  | { kind: 'label'; label: EventLabelInput }
  | { kind: 'dismiss'; noiseReason: NoiseReason; note: string }
  | { kind: 'escalate'; reason: string };

/**
 * The handful of items the demo analyst works, chosen from the manifest: the best-recorded
 * earthquake labelled at its two nearest stations with P and S picks at the arrival times, the
 * first blast labelled at KV02, one escalation each for the first and the last earthquake at their
 * first recording station, and four noise windows dismissed with their reasons.
 */
export function demoActions(manifest: DemoIngestManifest): Map<string, DemoAction> {
  const actions = new Map<string, DemoAction>();
  const byEvent = (id: string): DemoIngestManifest['files'] => manifest.files.filter((f) => f.events.some((e) => e.id === id));
  const picks = (f: DemoIngestManifest['files'][number], eventId: string, withS: boolean): EventLabelInput['picks'] => {
    const ev = f.events.find((e) => e.id === eventId);
    const z = f.streams.find((s) => s.endsWith('HHZ'));
    const n = f.streams.find((s) => s.endsWith('HHN'));
    if (!ev || !z) return [];
    return [
      { phase: 'P', time: ev.p, onset: 'impulsive', polarity: 'undecidable', streamId: z },
      ...(withS && n ? [{ phase: 'S' as const, time: ev.s, onset: 'emergent' as const, polarity: 'undecidable' as const, streamId: n }] : []),
    ];
  };
  const eq4 = byEvent('kv-eq-4')
    .slice()
    .sort((a, b) => (a.events.find((e) => e.id === 'kv-eq-4')?.hypocentralKm ?? 0) - (b.events.find((e) => e.id === 'kv-eq-4')?.hypocentralKm ?? 0));
  for (const f of eq4.slice(0, 2)) {
    actions.set(f.file, { kind: 'label', label: { eventType: 'earthquake', certainty: 'known', distanceClass: 'local', picks: picks(f, 'kv-eq-4', true), note: 'Clear local event, P and S on all components; seen across the network.' } });
  }
  const blast = byEvent('kv-bl-1').find((f) => f.station === 'KV02');
  if (blast) {
    actions.set(blast.file, {
      kind: 'label',
      label: { eventType: 'quarry blast', certainty: 'known', distanceClass: 'local', picks: (picks(blast, 'kv-bl-1', false) ?? []).map((p) => ({ ...p, polarity: 'positive' as const })), note: 'Midday blast at the quarry, ripple-fired; compressional first motion.' },
    });
  }
  const eq1 = byEvent('kv-eq-1')[0];
  if (eq1) actions.set(eq1.file, { kind: 'escalate', reason: 'Night-time local earthquake recorded at four stations; please confirm before it goes in the catalogue.' });
  const eq5 = byEvent('kv-eq-5')[0];
  if (eq5) actions.set(eq5.file, { kind: 'escalate', reason: 'Small event north of the valley, close to the noise at the southern stations; second opinion please.' });
  const noise: [string, string, NoiseReason, string][] = [
    ['KV04', '2026-03-14T00:40:00', 'machinery', 'Pumping station, 25 Hz line only.'],
    ['KV05', '2026-03-14T14:55:00', 'wind', 'Afternoon gusts on the saddle.'],
    ['KV03', '2026-03-14T09:26:40', 'traffic', 'Morning traffic on the valley highway.'],
    ['KV06', '2026-03-14T03:50:00', 'instrument glitch', 'Single-sample spikes on HHZ; the digitiser again.'],
  ];
  for (const [station, start, noiseReason, note] of noise) {
    const f = manifest.files.find((x) => x.station === station && x.start.startsWith(start) && x.file.endsWith('.mseed'));
    if (f) actions.set(f.file, { kind: 'dismiss', noiseReason, note });
  }
  return actions;
}

/**
 * Ingests the demo windows (see the module comment).
 * @param opts.dir the demo-waveforms folder (default: the repository's)
 * @param opts.work false to ingest only (no dismissals, labels or escalations); default true
 * @returns what was done
 * @throws Error when the manifest is unreadable, a listed file is missing, or a demo station is not
 *   registered (run the demo seed first)
 */
export async function ingestDemo(deps: DemoIngestDeps, opts: { dir?: string; work?: boolean } = {}): Promise<DemoIngestReport> {
  const t0 = performance.now();
  const dir = opts.dir ?? DEMO_WAVEFORMS_DIR;
  const manifest = readDemoManifest(dir);
  const { db } = deps;

  const files = manifest.files.map((f) => {
    let bytes: Uint8Array;
    try {
      bytes = readFileSync(join(dir, f.file));
    } catch (err) {
      throw new Error(`demo file ${join(dir, f.file)} cannot be read (${err instanceof Error ? err.message : String(err)}); run npm run demo:generate`);
    }
    return { entry: f, bytes, sha: sha256Hex(bytes) };
  });
  const known = new Set(
    files.length ? (await db.select({ sha: uploads.sha256 }).from(uploads).where(inArray(uploads.sha256, files.map((f) => f.sha)))).map((r) => r.sha) : [],
  );

  const stationRows = await db.select({ id: stations.id, code: stations.code }).from(stations).where(eq(stations.network, 'XX'));
  const stationId = new Map(stationRows.map((r) => [r.code, r.id]));
  const callers = new Map<string, IngestCaller>();

  // The responses and the velocity model come first: ingest builds an event as soon as a group forms.
  const network = await prepareDemoNetwork(db, dir);
  const report: DemoIngestReport = { files: files.length, created: 0, duplicates: 0, rejected: [], items: 0, historyDismissed: 0, labelled: 0, dismissed: 0, escalated: 0, network, seconds: 0 };
  const ingestAll = async (list: typeof files, concurrency = 1, after?: (file: string, itemIds: number[]) => Promise<void>): Promise<Map<string, number[]>> => {
    const createdItems = new Map<string, number[]>();
    // Callers first, one per station (creating a token is not safe to race).
    for (const f of list) {
      if (known.has(f.sha) || callers.has(f.entry.station)) continue;
      const id = stationId.get(f.entry.station);
      if (id === undefined) throw new Error(`demo station XX.${f.entry.station} is not registered: the demo seed (seedDemo) must run first`);
      callers.set(f.entry.station, await seedCaller(db, id));
    }
    await eachLimited(list, concurrency, async (f) => {
      if (known.has(f.sha)) {
        report.duplicates++;
        return;
      }
      const caller = callers.get(f.entry.station);
      if (!caller) throw new Error(`demo station XX.${f.entry.station} has no ingest caller`);
      const name = uploadName(f.entry.file);
      const outcome = await ingestFile(deps, { filename: name, contentType: name.endsWith('.csv') ? 'text/csv' : 'application/vnd.fdsn.mseed', bytes: f.bytes }, caller);
      if (outcome.status === 'created') {
        report.created++;
        const ids = outcome.itemIds ?? outcome.items?.map((i) => i.id) ?? [];
        report.items += ids.length;
        createdItems.set(f.entry.file, ids);
        if (after) await after(f.entry.file, ids);
      } else if (outcome.status === 'duplicate') {
        report.duplicates++;
      } else {
        report.rejected.push({ filename: name, message: outcome.message ?? outcome.code ?? 'rejected' });
      }
    });
    return createdItems;
  };
  const work = opts.work !== false;
  const analyst = work
    ? (await db.select({ id: users.id, displayName: users.displayName, email: users.email }).from(users).where(eq(users.email, DEMO_ANALYST_EMAIL)))[0]
    : undefined;

  // 1. The noise history, dismissed before the demo day is scored against it.
  const history = files.filter((f) => f.entry.reason === 'history');
  await ingestAll(history, HISTORY_CONCURRENCY);
  if (analyst && history.length > 0) report.historyDismissed = await dismissHistory(deps, analyst, history);

  // 2. The demo day, one file at a time in the manifest's (time) order, each worked as it arrives.
  const actions = demoActions(manifest);
  await ingestAll(
    files.filter((f) => f.entry.reason !== 'history'),
    1,
    async (file, itemIds) => {
      const action = actions.get(file);
      const itemId = itemIds[0];
      if (analyst && action && itemId !== undefined) await workItem(deps, analyst, action, itemId, report);
    },
  );
  report.seconds = (performance.now() - t0) / 1000;
  return report;
}

/**
 * Has the demo analyst dismiss every history item still `new` (those this run created, and any a
 * broken earlier run left): claim, then dismiss with the manifest's noise reason, through the queue
 * services an analyst's dismissal uses. Items someone else already took are left alone.
 * @returns how many were dismissed
 */
async function dismissHistory(deps: DemoIngestDeps, analyst: QueuePerson, history: ReadonlyArray<{ entry: DemoIngestManifest['files'][number]; sha: string }>): Promise<number> {
  const reasonBySha = new Map(history.map((f) => [f.sha, f.entry.noiseReason ?? 'unknown noise']));
  const open = await deps.db
    .select({ id: queueItems.id, version: queueItems.version, sha: uploads.sha256 })
    .from(queueItems)
    .innerJoin(windows, eq(windows.id, queueItems.windowId))
    .innerJoin(uploads, eq(uploads.id, windows.uploadId))
    .where(and(inArray(uploads.sha256, [...reasonBySha.keys()]), eq(queueItems.state, 'new')))
    .orderBy(queueItems.windowStart);
  const qdeps = { db: deps.db, notify: deps.notify, ipAddress: null };
  await eachLimited(open, HISTORY_CONCURRENCY, async (item) => {
    const noiseReason = reasonBySha.get(item.sha) ?? 'unknown noise';
    const claimed = await claimItem(qdeps, analyst, item.id, item.version);
    await dismissItem(qdeps, analyst, item.id, claimed.version, { noiseReason, note: HISTORY_NOTES[noiseReason] });
  });
  return open.length;
}

/**
 * How many history files are ingested (and items dismissed) at once: their order does not matter
 * (no two overlap, each is dismissed whatever its flag), and overlapping the analysis in the worker
 * pool with the database round trips keeps `npm start` short.
 */
const HISTORY_CONCURRENCY = 4;

/** Runs `fn` over `items` with at most `limit` calls in flight; rejects with the first error. */
async function eachLimited<T>(items: readonly T[], limit: number, fn: (item: T) => Promise<void>): Promise<void> {
  let next = 0;
  const worker = async (): Promise<void> => {
    while (next < items.length) {
      const item = items[next++] as T;
      await fn(item);
    }
  };
  await Promise.all(Array.from({ length: Math.max(1, Math.min(limit, items.length)) }, worker));
}

/** The demo analyst works one item: claim, then label, dismiss or escalate it. */
async function workItem(deps: DemoIngestDeps, analyst: QueuePerson, action: DemoAction, itemId: number, report: DemoIngestReport): Promise<void> {
  const qdeps = { db: deps.db, notify: deps.notify, ipAddress: null };
  const [item] = await deps.db.select({ version: queueItems.version, state: queueItems.state }).from(queueItems).where(eq(queueItems.id, itemId));
  if (!item) return;
  const claimed = await claimItem(qdeps, analyst, itemId, item.version);
  if (action.kind === 'label') {
    await labelItem(qdeps, analyst, itemId, claimed.version, eventLabelSchema.parse(action.label));
    report.labelled++;
  } else if (action.kind === 'dismiss') {
    await dismissItem(qdeps, analyst, itemId, claimed.version, { noiseReason: action.noiseReason, note: action.note });
    report.dismissed++;
  } else {
    await escalateItem({ ...qdeps, onError: (err) => deps.logger.error({ err, itemId }, 'demo seed: escalation hook failed') }, analyst, itemId, claimed.version, { reason: action.reason }, deps.escalationListeners ?? []);
    report.escalated++;
  }
}
