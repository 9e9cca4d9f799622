import { createContext, useCallback, useContext, useEffect, useMemo, useRef, useState, type ReactNode } from 'react';
import { cx } from '@client/lib/cx';
import { CloseIcon } from './icons';

/** Toast tones. Each toast starts with a word for its tone, so colour is never the only cue. */
export type ToastTone = 'info' | 'ok' | 'warn' | 'danger';

/** What a screen passes to `notify`. */
export type ToastInput = {
  title: string;
  body?: string;
  tone?: ToastTone;
  /** Milliseconds before it goes; errors ('danger') stay until closed unless given one. */
  durationMs?: number;
};

type ToastItem = Required<Pick<ToastInput, 'title' | 'tone'>> & { id: number; body?: string; durationMs: number | null };

/** What useToast() returns. */
export type ToastApi = {
  /** Shows a toast and returns its id. */
  notify: (toast: ToastInput) => number;
  /** Closes a toast early. */
  dismiss: (id: number) => void;
};

const ToastContext = createContext<ToastApi | null>(null);

const toneWord: Record<ToastTone, string> = { info: 'Note', ok: 'Done', warn: 'Warning', danger: 'Error' };
const toneClass: Record<ToastTone, string> = {
  info: 'border-l-info',
  ok: 'border-l-ok',
  warn: 'border-l-warn',
  danger: 'border-l-danger',
};
const toneText: Record<ToastTone, string> = { info: 'text-info', ok: 'text-ok', warn: 'text-warn', danger: 'text-danger' };

function ToastCard({ toast, onDismiss }: { toast: ToastItem; onDismiss: (id: number) => void }) {
  const timer = useRef<number | undefined>(undefined);
  const onClose = useCallback(() => onDismiss(toast.id), [onDismiss, toast.id]);
  // Stable while the toast lives, so a new toast elsewhere does not restart this one's timer.
  const start = useCallback(() => {
    if (toast.durationMs === null) return;
    window.clearTimeout(timer.current);
    timer.current = window.setTimeout(onClose, toast.durationMs);
  }, [toast.durationMs, onClose]);
  const stop = () => window.clearTimeout(timer.current);
  useEffect(() => {
    start();
    return stop;
  }, [start]);
  return (
    <li
      onMouseEnter={stop}
      onMouseLeave={start}
      onFocus={stop}
      onBlur={start}
      className={cx('flex w-80 items-start gap-3 rounded-sm border border-line-strong border-l-4 bg-surface px-3 py-2 shadow-lg', toneClass[toast.tone])}
    >
      <div className="min-w-0 flex-1" role={toast.tone === 'danger' ? 'alert' : undefined}>
        <p className="text-base">
          <span className={cx('mr-1.5 font-semibold', toneText[toast.tone])}>{toneWord[toast.tone]}:</span>
          <span className="font-medium text-ink">{toast.title}</span>
        </p>
        {toast.body ? <p className="text-sm text-ink-muted">{toast.body}</p> : null}
      </div>
      <button type="button" onClick={onClose} aria-label={`Close: ${toast.title}`} className="rounded-xs p-0.5 text-ink-muted hover:text-ink">
        <CloseIcon size={14} />
      </button>
    </li>
  );
}

/** Holds the toasts and draws them bottom-right in a polite live region. Put it once near the root. */
export function ToastProvider({ children }: { children: ReactNode }) {
  const [toasts, setToasts] = useState<ToastItem[]>([]);
  const nextId = useRef(1);
  const dismiss = useCallback((id: number) => setToasts((list) => list.filter((t) => t.id !== id)), []);
  const notify = useCallback((input: ToastInput) => {
    const id = nextId.current++;
    const tone = input.tone ?? 'info';
    const durationMs = input.durationMs ?? (tone === 'danger' ? null : 6000);
    setToasts((list) => [...list.slice(-4), { id, title: input.title, body: input.body, tone, durationMs }]);
    return id;
  }, []);
  const api = useMemo(() => ({ notify, dismiss }), [notify, dismiss]);
  return (
    <ToastContext.Provider value={api}>
      {children}
      <section aria-label="Notifications" className="pointer-events-none fixed right-4 bottom-4 z-50">
        <ol aria-live="polite" className="pointer-events-auto flex flex-col gap-2">
          {toasts.map((toast) => (
            <ToastCard key={toast.id} toast={toast} onDismiss={dismiss} />
          ))}
        </ol>
      </section>
    </ToastContext.Provider>
  );
}

/** The toast API; throws outside <ToastProvider>, which is a wiring mistake. */
export function useToast(): ToastApi {
  const api = useContext(ToastContext);
  if (!api) throw new Error('useToast() needs a <ToastProvider> above it (see client/src/app/provider.tsx)');
  return api;
}
