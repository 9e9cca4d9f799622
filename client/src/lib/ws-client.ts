import { serverMessageSchema, wsPolicyViolation, wsRightsChanged, wsSessionEnded, type ChangeMessage } from '@shared/realtime';

/** The live connection's state, as the shell shows it. */
export type LiveState = 'live' | 'connecting' | 'offline';

/** The part of the WebSocket interface the live client uses (the browser's, or `ws` in tests). */
export interface SocketLike {
  readonly readyState: number;
  onopen: ((ev: unknown) => void) | null;
  onmessage: ((ev: { data: unknown }) => void) | null;
  onclose: ((ev: { code: number; reason: string }) => void) | null;
  onerror: ((ev: unknown) => void) | null;
  close(code?: number, reason?: string): void;
}

/** What `adaptSocket` needs: the event-target side of a WebSocket (the browser's, or `ws`'s). */
export interface EventSocket {
  readonly readyState: number;
  addEventListener(type: 'message', fn: (ev: { data: unknown }) => void): void;
  addEventListener(type: 'close', fn: (ev: { code: number; reason: string }) => void): void;
  addEventListener(type: 'open' | 'error', fn: (ev: unknown) => void): void;
  close(code?: number, reason?: string): void;
}

/** Wraps a WebSocket (browser or `ws`) as the `SocketLike` the live client drives. */
export function adaptSocket(ws: EventSocket): SocketLike {
  const s: SocketLike = {
    get readyState() {
      return ws.readyState;
    },
    onopen: null,
    onmessage: null,
    onclose: null,
    onerror: null,
    close: (code, reason) => ws.close(code, reason),
  };
  ws.addEventListener('open', (ev) => s.onopen?.(ev));
  ws.addEventListener('message', (ev) => s.onmessage?.({ data: ev.data }));
  ws.addEventListener('close', (ev) => s.onclose?.({ code: ev.code, reason: ev.reason }));
  ws.addEventListener('error', (ev) => s.onerror?.(ev));
  return s;
}

/** Options of `createLiveClient`. */
export interface LiveClientOptions {
  /** The hub's URL without a query, e.g. `ws://host/ws` (see `liveUrl`). */
  url: string;
  /** Opens a socket (default: the browser's WebSocket). */
  connect?: (url: string) => SocketLike;
  /** New changes, in sequence order, each exactly once. */
  onChanges: (changes: ChangeMessage[]) => void;
  /** The server could not replay what was missed, or what this person may see changed: reload every live list. */
  onRefetch: (reason: string) => void;
  /** The server closed the socket because its session ended (4401): the app should recheck who is signed in. */
  onSessionEnded?: () => void;
  onState?: (state: LiveState) => void;
  /** Resume after this sequence number on the first connection (default: from now). */
  since?: number;
  /** Reconnect delays: first, cap (ms) and jitter fraction (default 500 ms, 15 s, 0.5). */
  backoff?: { initialMs?: number; maxMs?: number; jitter?: number };
  /** A random number in [0, 1) for the jitter (tests pass their own). */
  random?: () => number;
  /** Failed attempts in a row after which the state reads `offline` (still retrying), default 3. */
  offlineAfter?: number;
}

/** A running live client. */
export interface LiveClient {
  /** The last sequence number received (undefined before the first hello). */
  lastSeq(): number | undefined;
  state(): LiveState;
  /** Reconnects now (e.g. after signing in or when the browser comes back online). */
  reconnectNow(): void;
  /** Closes the socket and stops reconnecting. */
  stop(): void;
}

/**
 * Reconnect delay after `attempt` failures in a row: the exponential step
 * min(maxMs, initialMs · 2^attempt), reduced by up to `jitter` of itself at random, so many
 * clients dropped at once do not come back at the same instant (exponential backoff with jitter,
 * common practice).
 * @param attempt failures so far (0 for the first retry)
 * @param random a number in [0, 1)
 * @returns delay in ms
 */
export function backoffDelayMs(attempt: number, opts: { initialMs: number; maxMs: number; jitter: number }, random: number): number {
  const step = Math.min(opts.maxMs, opts.initialMs * 2 ** Math.max(0, attempt));
  return Math.round(step * (1 - opts.jitter * random));
}

/** The hub URL of the page's own origin: `ws(s)://host/ws`. */
export function liveUrl(location: { protocol: string; host: string }): string {
  return `${location.protocol === 'https:' ? 'wss' : 'ws'}://${location.host}/ws`;
}

/**
 * The live-update client of the hub protocol (server/realtime/hub.ts): connects to `url?since=N`
 * with N the last sequence number it saw, hands every change to `onChanges` once and in order
 * (anything at or below N is dropped, so a replay overlapping a live message never repeats), asks
 * for a refetch when told to (or when the server's sequence went backwards, i.e. a new database),
 * and reconnects by itself with exponential backoff and jitter. Messages that fail the schema are
 * ignored. A socket closed for policy (no session, 1008) or because its session ended (4401) keeps
 * retrying at the longest delay; one closed because the person's roles or stations changed (4403)
 * reconnects at once and asks for a refetch, since what it may see is no longer what it saw.
 */
export function createLiveClient(opts: LiveClientOptions): LiveClient {
  const connect = opts.connect ?? ((url: string) => adaptSocket(new WebSocket(url)));
  const backoff = { initialMs: opts.backoff?.initialMs ?? 500, maxMs: opts.backoff?.maxMs ?? 15_000, jitter: opts.backoff?.jitter ?? 0.5 };
  const random = opts.random ?? Math.random;
  const offlineAfter = opts.offlineAfter ?? 3;
  let last = opts.since;
  let state: LiveState = 'connecting';
  let socket: SocketLike | null = null;
  let timer: ReturnType<typeof setTimeout> | null = null;
  let failures = 0;
  let stopped = false;
  let refetchOnHello = false;

  const setState = (s: LiveState) => {
    if (s === state) return;
    state = s;
    opts.onState?.(s);
  };

  const schedule = (policy: boolean) => {
    if (stopped || timer) return;
    const delay = policy ? backoff.maxMs : backoffDelayMs(failures, backoff, random());
    failures++;
    setState(policy || failures >= offlineAfter ? 'offline' : 'connecting');
    timer = setTimeout(() => {
      timer = null;
      open();
    }, delay);
  };

  const handle = (raw: unknown) => {
    let json: unknown;
    try {
      json = JSON.parse(typeof raw === 'string' ? raw : String(raw));
    } catch {
      return;
    }
    const parsed = serverMessageSchema.safeParse(json);
    if (!parsed.success) return;
    const m = parsed.data;
    if (m.type === 'hello') {
      failures = 0;
      setState('live');
      if (last === undefined) last = m.seq;
      else if (m.seq < last) {
        last = m.seq;
        refetchOnHello = false;
        opts.onRefetch('the server restarted its change log');
      }
      if (refetchOnHello) {
        refetchOnHello = false;
        opts.onRefetch('your roles or stations changed');
      }
      return;
    }
    if (m.type === 'refetch') {
      last = m.seq;
      opts.onRefetch(m.reason);
      return;
    }
    const fresh = m.changes.filter((c) => last === undefined || c.seq > last);
    if (fresh.length === 0) return;
    last = fresh[fresh.length - 1]?.seq ?? last;
    opts.onChanges(fresh);
  };

  const open = () => {
    if (stopped) return;
    setState(failures >= offlineAfter ? 'offline' : 'connecting');
    const url = last === undefined ? opts.url : `${opts.url}?since=${last}`;
    let s: SocketLike;
    try {
      s = connect(url);
    } catch {
      schedule(false);
      return;
    }
    socket = s;
    s.onmessage = (ev) => {
      if (socket === s) handle(ev.data);
    };
    s.onclose = (ev) => {
      if (socket !== s) return;
      socket = null;
      if (ev.code === wsRightsChanged) {
        refetchOnHello = true;
        failures = 0;
        schedule(false);
        return;
      }
      if (ev.code === wsSessionEnded) opts.onSessionEnded?.();
      schedule(ev.code === wsPolicyViolation || ev.code === wsSessionEnded);
    };
    s.onerror = () => {
      // onclose follows and schedules the retry.
    };
  };

  open();

  return {
    lastSeq: () => last,
    state: () => state,
    reconnectNow() {
      if (stopped) return;
      if (timer) clearTimeout(timer);
      timer = null;
      failures = 0;
      const s = socket;
      socket = null;
      s?.close(1000, 'reconnect');
      open();
    },
    stop() {
      stopped = true;
      if (timer) clearTimeout(timer);
      timer = null;
      const s = socket;
      socket = null;
      s?.close(1000, 'stopped');
      setState('offline');
    },
  };
}
