import { useEffect, useState } from 'react';

/**
 * How long ago `iso` was, in words an analyst reads at a glance: "40 s", "12 min", "3 h 05 min",
 * "2 d 4 h". Negative spans (clock skew) read "0 s".
 */
export function formatAge(iso: string, nowMs: number): string {
  const s = Math.max(0, Math.floor((nowMs - Date.parse(iso)) / 1000));
  if (s < 60) return `${s} s`;
  const m = Math.floor(s / 60);
  if (m < 60) return `${m} min`;
  const h = Math.floor(m / 60);
  if (h < 48) return `${h} h ${String(m % 60).padStart(2, '0')} min`;
  return `${Math.floor(h / 24)} d ${h % 24} h`;
}

/** The current time, updated every `everyMs` (default 15 s), for ages that keep counting. */
export function useNow(everyMs = 15_000): number {
  const [now, setNow] = useState(() => Date.now());
  useEffect(() => {
    const t = setInterval(() => setNow(Date.now()), everyMs);
    return () => clearInterval(t);
  }, [everyMs]);
  return now;
}
