import type { IncomingMessage, Server } from 'node:http';
import type { Duplex } from 'node:stream';
import { WebSocketServer, type WebSocket } from 'ws';
import type { Role } from '@shared/auth/roles';
import { wsPolicyViolation, wsRightsChanged, wsSessionEnded, type ChangeMessage, type ServerMessage } from '@shared/realtime';
import type { Database } from '@server/db/client';
import type { Logger } from '@server/logger';
import { changesSince, latestSeq, oldestKeptSeq, type StoredChange } from './change-log';
import { createOutageLog } from './outage-log';
import { visibleTo, type PreparedChange } from './visible-changes';

/**
 * Who is on the other end of a socket, as loaded when it connected: the user, the session the
 * upgrade came with, and the rights every change is filtered by (roles and assigned stations).
 */
export interface HubPrincipal {
  id: string;
  sessionId: string;
  roles: readonly Role[];
  stationIds: readonly number[];
}

/**
 * What a re-check says of one socket's principal: still `ok`; its session `ended` (signed out,
 * expired, ended elsewhere, the account deactivated); or the person's roles or stations
 * `changed`, so the filter the socket was opened with no longer holds.
 */
export type HubVerdict = 'ok' | 'ended' | 'changed';

/** Options of the live-update hub. */
export interface HubOptions {
  db: Database;
  logger: Logger;
  /** Resolves the session of an upgrade request (cookie), or null when there is none. */
  authenticate(req: IncomingMessage): Promise<HubPrincipal | null>;
  /** True when the upgrade's Origin header is our own. */
  originAllowed(origin: string | undefined, req: IncomingMessage): boolean;
  /** Ping interval; a peer that has not answered the previous ping by the next one is dropped. */
  heartbeatMs?: number;
  /** Safety poll of the change log, for changes written without notify() (e.g. by another process). */
  pollMs?: number;
  /** Drop a client whose unsent buffer exceeds this many bytes (it resumes on reconnect). */
  maxBufferedBytes?: number;
  /**
   * Re-checks the principals of the open sockets (a few queries for all of them, not one per
   * socket): the verdict for each session id. A session missing from the answer counts as ended.
   * Without it sockets are never re-checked.
   */
  recheck?: (principals: readonly HubPrincipal[]) => Promise<Map<string, HubVerdict>>;
  /** Interval of the periodic re-check, ms (default 2000); `recheckNow()` runs one at once. */
  recheckMs?: number;
  /**
   * Called by `notify()` besides waking this hub: in the multi-instance mode it publishes the
   * wake-up to the other processes' hubs (server/cluster/change-wakeup.ts).
   */
  onNotify?: () => void;
}

interface Client {
  ws: WebSocket;
  principal: HubPrincipal;
  /** Highest seq sent to this client. */
  cursor: number;
  alive: boolean;
}

/** The one event hub: every live change goes out through it, in sequence order, once per client. */
export interface RealtimeHub {
  /** Handles upgrades on `path` (default /ws) of `server`. */
  attach(server: Server, path?: string): void;
  /** A change was committed: send what is new to every client (and tell the other processes, `onNotify`). Cheap to call often. */
  notify(): void;
  /** Another process committed a change: read the change log and send what is new, telling nobody. */
  wake(): void;
  /** Resolves once every change committed before the call has been handed to the sockets. */
  flush(): Promise<void>;
  /**
   * Re-checks every open socket's session and rights now (after a sign-out, a deactivation, a
   * role or station change) and closes those that no longer hold: 4401 when the session ended,
   * 4403 when roles or stations changed (shared/realtime.ts). Resolves when that check is done.
   */
  recheckNow(): Promise<void>;
  clientCount(): number;
  close(): Promise<void>;
}

/**
 * Creates the hub. Protocol: connect to `/ws?since=N` (N = last seq the client saw; omit for "from
 * now"). The server answers `hello` with the latest seq, then `changes` after N in order (or
 * `refetch` when N is older than the kept log), then live `changes`. Sockets without a valid session
 * or from a foreign Origin are closed with code 1008 (policy violation).
 *
 * Every change, live or replayed, goes only to the sockets whose principal may see it
 * (`visibleTo`: the policy module's `canSee` on the audience stored with the change), so an
 * operator hears only of their stations' items and a supervisor only of their own inbox. Sockets
 * are re-checked every `recheckMs` and on `recheckNow()`, and closed with 4401 / 4403 when their
 * session ended or their rights changed.
 */
export function createHub(opts: HubOptions): RealtimeHub {
  const wss = new WebSocketServer({ noServer: true, maxPayload: 64 * 1024 });
  const clients = new Set<Client>();
  const heartbeatMs = opts.heartbeatMs ?? 30_000;
  const maxBuffered = opts.maxBufferedBytes ?? 8 * 1024 * 1024;
  let broadcastCursor: number | undefined;
  let chain: Promise<void> = Promise.resolve();
  let pumpQueued = false;
  let closed = false;

  // A database outage fails the poll every second: logged once when it starts and once when it ends.
  const readOutage = createOutageLog(opts.logger, 'live hub: change log read');

  /** Serialises every change-log read, so catch-ups and broadcasts never interleave. */
  const enqueue = (task: () => Promise<void>): Promise<void> => {
    chain = chain.then(task).catch((err: unknown) => readOutage.failed(err));
    return chain;
  };

  /** Sends one message; `encoded` is its JSON as UTF-8 when the caller already has it. */
  const send = (client: Client, message: ServerMessage, encoded?: Buffer) => {
    if (client.ws.readyState !== client.ws.OPEN) return;
    if (client.ws.bufferedAmount > maxBuffered) {
      client.ws.terminate();
      return;
    }
    client.ws.send(encoded ?? JSON.stringify(message), { binary: false });
  };

  /** One read of the change log, ready to send: audiences apart, and each distinct list encoded once. */
  interface Batch {
    changes: PreparedChange[];
    /** Encoded `changes` messages by the list they carry (see `sendChanges`). */
    encoded: Map<string, Buffer>;
  }
  const prepare = (stored: StoredChange[]): Batch => ({
    changes: stored.map(({ audience, ...message }) => ({ message, audience })),
    encoded: new Map(),
  });

  /**
   * Sends this client the changes of `batch` it has not seen and may see (`visibleTo`). Clients
   * that may see the same list share one encoding (keyed by the seqs it holds, and the summary of
   * any change cut down for them), so a broadcast to many analysts serialises once. The cursor
   * moves past changes the client may not see, so they are never considered again.
   */
  const sendChanges = (client: Client, batch: Batch) => {
    const visible: ChangeMessage[] = [];
    let key = '';
    let last = client.cursor;
    for (const change of batch.changes) {
      if (change.message.seq <= client.cursor) continue;
      last = change.message.seq;
      const m = visibleTo(client.principal, change);
      if (!m) continue;
      visible.push(m);
      key += m === change.message ? `${m.seq},` : `${m.seq}:${JSON.stringify(m.summary)},`;
    }
    client.cursor = last;
    if (visible.length === 0) return;
    let encoded = batch.encoded.get(key);
    if (!encoded) {
      encoded = Buffer.from(JSON.stringify({ type: 'changes', changes: visible } satisfies ServerMessage));
      batch.encoded.set(key, encoded);
    }
    send(client, { type: 'changes', changes: visible }, encoded);
  };

  const pump = async () => {
    pumpQueued = false;
    if (broadcastCursor === undefined) broadcastCursor = await latestSeq(opts.db);
    for (;;) {
      const stored = await changesSince(opts.db, broadcastCursor, 500);
      if (stored.length === 0) return;
      const batch = prepare(stored);
      for (const client of clients) sendChanges(client, batch);
      broadcastCursor = stored[stored.length - 1]?.seq ?? broadcastCursor;
      if (stored.length < 500) return;
    }
  };

  const wake = () => {
    if (pumpQueued || closed) return;
    pumpQueued = true;
    // Every pump that returns has read the change log at least once: the read works (again).
    void enqueue(async () => {
      await pump();
      readOutage.ok();
    });
  };
  const notify = () => {
    wake();
    if (!closed) opts.onNotify?.();
  };

  const join = (ws: WebSocket, principal: HubPrincipal, since: number | undefined) =>
    enqueue(async () => {
      if (broadcastCursor === undefined) broadcastCursor = await latestSeq(opts.db);
      const now = broadcastCursor;
      const client: Client = { ws, principal, cursor: now, alive: true };
      send(client, { type: 'hello', seq: now });
      if (since !== undefined && since < now) {
        const oldest = await oldestKeptSeq(opts.db);
        if (oldest === undefined || since < oldest - 1) {
          send(client, { type: 'refetch', seq: now, reason: `changes after ${since} are no longer kept` });
        } else {
          client.cursor = since;
          let cursor = since;
          while (cursor < now) {
            const changes = (await changesSince(opts.db, cursor, 500)).filter((c) => c.seq <= now);
            if (changes.length === 0) break;
            // The replay goes through the same filter as live changes.
            sendChanges(client, prepare(changes));
            cursor = changes[changes.length - 1]?.seq ?? now;
          }
          client.cursor = now;
        }
      }
      ws.on('pong', () => {
        client.alive = true;
      });
      ws.on('close', () => clients.delete(client));
      ws.on('error', () => clients.delete(client));
      // Clients send nothing but pongs; any message is ignored.
      if (ws.readyState === ws.OPEN) clients.add(client);
    });

  const heartbeat = setInterval(() => {
    for (const client of clients) {
      if (!client.alive) {
        client.ws.terminate();
        clients.delete(client);
        continue;
      }
      client.alive = false;
      client.ws.ping();
    }
  }, heartbeatMs);
  heartbeat.unref();
  const poll = setInterval(wake, opts.pollMs ?? 1000);
  poll.unref();

  /** Closes a socket whose principal no longer holds, and stops sending to it at once. */
  const expel = (client: Client, verdict: Exclude<HubVerdict, 'ok'>) => {
    clients.delete(client);
    if (verdict === 'ended') client.ws.close(wsSessionEnded, 'session ended');
    else client.ws.close(wsRightsChanged, 'roles or stations changed');
    // A peer that does not answer the close handshake is cut off.
    setTimeout(() => client.ws.terminate(), 2000).unref();
  };

  let checking: Promise<void> | null = null;
  let checkAgain = false;
  // The database away: sockets stay open (the API cannot check sessions either); said once, and once when it is back.
  const recheckOutage = createOutageLog(opts.logger, 'live hub: socket re-check');
  /** One re-check of every open socket; calls while one runs are folded into one more run after it. */
  const recheckNow = (): Promise<void> => {
    const recheck = opts.recheck;
    if (!recheck || closed) return Promise.resolve();
    if (checking) {
      checkAgain = true;
      return checking;
    }
    checking = (async () => {
      do {
        checkAgain = false;
        const list = [...clients];
        if (list.length === 0) continue;
        try {
          const verdicts = await recheck(list.map((c) => c.principal));
          recheckOutage.ok();
          for (const client of list) {
            const verdict = verdicts.get(client.principal.sessionId) ?? 'ended';
            if (verdict !== 'ok' && clients.has(client)) expel(client, verdict);
          }
        } catch (err) {
          recheckOutage.failed(err);
        }
      } while (checkAgain && !closed);
    })().finally(() => {
      checking = null;
    });
    return checking;
  };
  const recheckTimer = setInterval(() => void recheckNow(), opts.recheckMs ?? 2000);
  recheckTimer.unref();

  const refuse = (req: IncomingMessage, socket: Duplex, head: Buffer, reason: string) => {
    wss.handleUpgrade(req, socket, head, (ws) => ws.close(wsPolicyViolation, reason));
  };

  return {
    attach(server, path = '/ws') {
      server.on('upgrade', (req, socket, head) => {
        const url = new URL(req.url ?? '/', 'http://localhost');
        if (url.pathname !== path) {
          socket.destroy();
          return;
        }
        socket.on('error', () => socket.destroy());
        if (!opts.originAllowed(req.headers.origin, req)) {
          refuse(req, socket, head, 'origin not allowed');
          return;
        }
        const sinceRaw = url.searchParams.get('since');
        const since = sinceRaw !== null && /^\d+$/.test(sinceRaw) ? Number(sinceRaw) : undefined;
        opts
          .authenticate(req)
          .then((principal) => {
            if (!principal) {
              refuse(req, socket, head, 'sign in first');
              return;
            }
            wss.handleUpgrade(req, socket, head, (ws) => void join(ws, principal, since));
          })
          .catch((err: unknown) => {
            opts.logger.warn({ err }, 'live hub: authentication failed');
            socket.destroy();
          });
      });
    },
    notify,
    wake,
    flush() {
      wake();
      return enqueue(async () => {});
    },
    recheckNow,
    clientCount: () => clients.size,
    async close() {
      closed = true;
      clearInterval(heartbeat);
      clearInterval(poll);
      clearInterval(recheckTimer);
      for (const client of clients) client.ws.terminate();
      clients.clear();
      await chain;
      await new Promise<void>((ok) => wss.close(() => ok()));
    },
  };
}
