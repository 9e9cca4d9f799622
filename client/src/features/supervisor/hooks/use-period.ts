import { useQuery } from '@tanstack/react-query';
import { useState } from 'react';
import { latestWindowsQuery } from '@client/features/supervisor/api/supervisor-api';
import { periodUpToLatest, type DefaultPeriod } from '@client/features/supervisor/components/common';

/** What `usePeriod` gives a screen. */
export type PeriodState = {
  /** The period in use: the person's own once they edit it, else the default; undefined while the default loads. */
  from: string | undefined;
  to: string | undefined;
  /** The default (for the line saying what it is); undefined while it loads. */
  defaultPeriod: DefaultPeriod | undefined;
  /** Whether the person has changed the period (the default line is then hidden). */
  edited: boolean;
  setFrom: (iso: string) => void;
  setTo: (iso: string) => void;
  error: unknown;
};

/**
 * A screen's period [from, to): by default the `days` UTC days up to the latest window with items
 * (GET /api/supervisor/latest-windows), labelled events only when `kind` is 'labelled'; one
 * station's when `stationId` is given. The default follows the data (and the station) until the
 * person edits either end.
 */
export function usePeriod(days: number, kind: 'labelled' | 'any', stationId?: number): PeriodState {
  const latest = useQuery(latestWindowsQuery(stationId));
  const [own, setOwn] = useState<{ from: string; to: string } | null>(null);
  const defaultPeriod = latest.data ? periodUpToLatest(kind === 'labelled' ? latest.data.latestLabelledWindowStart : latest.data.latestWindowStart, days) : latest.isError ? periodUpToLatest(null, days) : undefined;
  const current = own ?? defaultPeriod;
  return {
    from: current?.from,
    to: current?.to,
    defaultPeriod,
    edited: own !== null,
    setFrom: (iso) => setOwn({ from: iso, to: current?.to ?? iso }),
    setTo: (iso) => setOwn({ from: current?.from ?? iso, to: iso }),
    error: latest.error,
  };
}
