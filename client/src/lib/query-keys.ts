/**
 * Every TanStack Query key of the client, one factory per resource. A key starts with its
 * resource, so invalidating a prefix (`queryKeys.queue.all`) reaches every query under it, and a
 * screen never spells a key by hand (a typo would silently miss the cache).
 */
export const queryKeys = {
  /** The signed-in person (GET /api/auth/session). */
  session: ['auth', 'me'] as const,
  /** A one-time token's check (password reset or invitation). */
  tokenCheck: (kind: string, token: string | null) => ['auth', 'token-check', kind, token] as const,
  /** Who is signed in (GET /api/auth/me) as the queue screens read it. */
  queueMe: ['me'] as const,
  queue: {
    all: ['queue'] as const,
    lists: ['queue', 'list'] as const,
    list: (filters: object) => ['queue', 'list', filters] as const,
    item: (id: number) => ['queue', 'item', id] as const,
    /** An item's traces for a span and plot width; `display` names the analyst's filter and units ('engine': the engine's own traces). */
    traces: (id: number, from: number | null, to: number | null, points: number, display: string) => ['queue', 'traces', id, from, to, points, display] as const,
    candidateEvent: (id: number) => ['queue', 'candidate-event', id] as const,
    reviewNote: (itemId: number) => ['queue', 'review-note', itemId] as const,
  },
  supervisor: {
    all: ['supervisor'] as const,
    /** The part of the supervisor screens a live change touches. */
    part: (part: 'inbox' | 'review' | 'candidates' | 'latest-windows' | 'thresholds') => ['supervisor', part] as const,
    inbox: ['supervisor', 'inbox'] as const,
    review: (filters: object) => ['supervisor', 'review', filters] as const,
    candidates: (from: string | undefined, to: string | undefined) => ['supervisor', 'candidates', from, to] as const,
    thresholds: (stationId: number, proposed: object | null) => ['supervisor', 'thresholds', stationId, proposed] as const,
    stations: ['supervisor', 'stations'] as const,
    dashboard: (from: string | undefined, to: string | undefined) => ['supervisor', 'dashboard', from, to] as const,
    latestWindows: (stationId: number | undefined) => ['supervisor', 'latest-windows', stationId ?? 'all'] as const,
    /** The catalogue's events whose first arrival lies in [from, to) (under the review part: a live change refetches them). */
    catalogueEvents: (from: string, to: string) => ['supervisor', 'review', 'events', from, to] as const,
    /** One catalogue event opened on demand, with its member windows. */
    catalogueEvent: (id: number) => ['supervisor', 'review', 'event', id] as const,
    velocityModel: (network: string) => ['supervisor', 'velocity-model', network] as const,
  },
  /** Located events (the event screen and the queue's links to it). */
  events: {
    all: ['events'] as const,
    /** Candidate group id → event id and member window → event id, for the queue's and the review screen's links. */
    index: ['events', 'index'] as const,
    detail: (id: number) => ['events', 'detail', id] as const,
    /** The geometry from one origin: a relocation (a new origin id) gives new predictions. */
    geometry: (id: number, originId: number | null) => ['events', 'geometry', id, originId] as const,
    traces: (id: number, points: number) => ['events', 'traces', id, points] as const,
  },
  stations: {
    all: ['stations'] as const,
    detail: (id: number) => ['stations', id] as const,
    health: (id: number, days: number) => ['stations', id, 'health', days] as const,
    tokens: (id: number) => ['stations', id, 'tokens'] as const,
    /** Who is signed in (GET /api/auth/me) as the station pages read it. */
    me: ['stations', 'me'] as const,
  },
  admin: {
    all: ['admin'] as const,
    users: ['admin', 'users'] as const,
    invitations: ['admin', 'invitations'] as const,
    stations: ['admin', 'stations'] as const,
    mailbox: (offset: number) => ['admin', 'mailbox', offset] as const,
    message: (id: number) => ['admin', 'mailbox', 'message', id] as const,
  },
  account: {
    sessions: ['account', 'sessions'] as const,
  },
  /** Waveform similarity (seen before): an item's matches, the supervisor's families. */
  similarity: {
    all: ['similarity'] as const,
    item: (id: number) => ['similarity', 'item', id] as const,
    families: (minValue: number) => ['similarity', 'families', minValue] as const,
  },
  audit: {
    list: (filters: object, offset: number) => ['audit', filters, offset] as const,
  },
};
