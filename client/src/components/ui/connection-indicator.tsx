import { cx } from '@client/lib/cx';

/** The websocket's state as the shell shows it. */
export type ConnectionState = 'live' | 'connecting' | 'offline';

const looks: Record<ConnectionState, { word: string; detail: string }> = {
  live: { word: 'Live', detail: 'New items arrive as they are scored.' },
  connecting: { word: 'Connecting…', detail: 'Reaching the server; the list may be behind.' },
  offline: { word: 'Offline', detail: 'Not receiving updates; the list may be out of date.' },
};

/** Props of <ConnectionIndicator>. */
export type ConnectionIndicatorProps = { state: ConnectionState; className?: string };

/**
 * The live connection state: a word plus a shape (filled dot, dashed ring, struck ring), so it reads
 * without colour. Announced politely when it changes.
 */
export function ConnectionIndicator({ state, className }: ConnectionIndicatorProps) {
  const look = looks[state];
  return (
    <span role="status" title={look.detail} className={cx('inline-flex items-center gap-1.5 text-sm text-ink', className)} data-connection={state}>
      <svg width="12" height="12" viewBox="0 0 12 12" aria-hidden="true" focusable="false">
        {state === 'live' ? <circle cx="6" cy="6" r="4.5" fill="var(--sf-ok)" /> : null}
        {state === 'connecting' ? (
          <circle cx="6" cy="6" r="4.4" fill="none" stroke="var(--sf-warn)" strokeWidth="1.6" strokeDasharray="2.2 1.8" className="origin-center animate-spin [animation-duration:3s]" />
        ) : null}
        {state === 'offline' ? (
          <>
            <circle cx="6" cy="6" r="4.4" fill="none" stroke="var(--sf-danger)" strokeWidth="1.6" />
            <path d="M2.9 9.1 9.1 2.9" stroke="var(--sf-danger)" strokeWidth="1.6" />
          </>
        ) : null}
      </svg>
      <span>{look.word}</span>
      <span className="sr-only">{look.detail}</span>
    </span>
  );
}
