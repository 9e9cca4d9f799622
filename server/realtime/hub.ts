import type { IncomingMessage, Server } from 'node:http';
import type { Duplex } from 'node:stream';
import { WebSocketServer, type WebSocket } from 'ws';
import { wsPolicyViolation, type ChangeMessage, type ServerMessage } from '@shared/realtime';
import type { Database } from '@server/db/client';
import type { Logger } from '@server/logger';
import { changesSince, latestSeq, oldestKeptSeq } from './change-log';
import { createOutageLog } from './outage-log';

/** Who is on the other end of a socket. */
export interface HubPrincipal {
  userId: string;
}

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
  /** A change was committed: send what is new to every client. Cheap to call often. */
  notify(): void;
  /** Resolves once every change committed before the call has been handed to the sockets. */
  flush(): Promise<void>;
  clientCount(): number;
  close(): Promise<void>;
}

/**
 * Creates the hub. Protocol: connect to `/ws?since=N` (N = last seq the client saw; omit for "from
 * now"). The server answers `hello` with the latest seq, then `changes` after N in order (or
 * `refetch` when N is older than the kept log), then live `changes`. Sockets without a valid session
 * or from a foreign Origin are closed with code 1008 (policy violation).
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

  /**
   * Sends the changes this client has not seen. `batch` carries the whole list encoded once, used
   * whenever the client needs all of it (the usual case), so a broadcast serialises once, not once
   * per client.
   */
  const sendChanges = (client: Client, changes: ChangeMessage[], batch?: { encoded: Buffer }) => {
    const fresh = changes.filter((c) => c.seq > client.cursor);
    if (fresh.length === 0) return;
    const message: ServerMessage = { type: 'changes', changes: fresh };
    send(client, message, batch && fresh.length === changes.length ? batch.encoded : undefined);
    client.cursor = fresh[fresh.length - 1]?.seq ?? client.cursor;
  };

  const pump = async () => {
    pumpQueued = false;
    if (broadcastCursor === undefined) broadcastCursor = await latestSeq(opts.db);
    for (;;) {
      const changes = await changesSince(opts.db, broadcastCursor, 500);
      if (changes.length === 0) return;
      const batch = { encoded: Buffer.from(JSON.stringify({ type: 'changes', changes } satisfies ServerMessage)) };
      for (const client of clients) sendChanges(client, changes, batch);
      broadcastCursor = changes[changes.length - 1]?.seq ?? broadcastCursor;
      if (changes.length < 500) return;
    }
  };

  const notify = () => {
    if (pumpQueued || closed) return;
    pumpQueued = true;
    // Every pump that returns has read the change log at least once: the read works (again).
    void enqueue(async () => {
      await pump();
      readOutage.ok();
    });
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
            sendChanges(client, changes);
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
  const poll = setInterval(notify, opts.pollMs ?? 1000);
  poll.unref();

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
    flush() {
      notify();
      return enqueue(async () => {});
    },
    clientCount: () => clients.size,
    async close() {
      closed = true;
      clearInterval(heartbeat);
      clearInterval(poll);
      for (const client of clients) client.ws.terminate();
      clients.clear();
      await chain;
      await new Promise<void>((ok) => wss.close(() => ok()));
    },
  };
}
