import { useCallback, useRef, useState } from 'react';
import type { UseFormReturn } from 'react-hook-form';
import type { Pick } from '@shared/schemas/label';
import type { TracesResponse } from '@shared/schemas/queue';
import { useToast } from '@client/components/ui/toast';
import type { ReviewFormInput, ReviewFormValues } from '@client/features/review/components/label-form';
import { pickSeconds, type TraceCursor } from '@client/features/review/components/trace-panel';

/** µs-precision ISO time of `seconds` after `startMs`. */
export function isoAt(startMs: number, seconds: number): string {
  const totalUs = Math.round(startMs * 1000 + seconds * 1e6);
  const ms = Math.floor(totalUs / 1000);
  const us = totalUs - ms * 1000;
  return `${new Date(ms).toISOString().slice(0, 23)}${String(us).padStart(3, '0')}Z`;
}

/**
 * The review screen's view of the traces: the zoomed range (null: the whole window), where the
 * mouse is on them, the phase a click places, and placing picks into the form.
 * @param windowStartMs the window's first sample, ms since the epoch
 * @param durationS the window's length, s
 */
export function useTraceView(form: UseFormReturn<ReviewFormInput, unknown, ReviewFormValues>, windowStartMs: number, durationS: number) {
  const toast = useToast();
  const [view, setView] = useState<{ from: number; to: number } | null>(null);
  const [phase, setPhase] = useState<'P' | 'S'>('P');
  const cursor = useRef<TraceCursor | null>(null);

  const placePick = useCallback(
    (streamId: string, timeS: number, which: 'P' | 'S') => {
      const others = (form.getValues('picks') ?? []).filter((p) => !(p.phase === which && p.streamId === streamId));
      const pick: Pick = { phase: which, time: isoAt(windowStartMs, timeS), onset: 'questionable', polarity: 'undecidable', streamId };
      form.setValue('picks', [...others, pick].sort((a, b) => pickSeconds(a, windowStartMs) - pickSeconds(b, windowStartMs)), { shouldDirty: true });
    },
    [form, windowStartMs],
  );
  const onPick = useCallback((streamId: string, t: number) => placePick(streamId, t, phase), [placePick, phase]);
  const onZoom = useCallback((from: number, to: number) => setView({ from, to }), []);
  const onCursor = useCallback((at: TraceCursor | null) => {
    cursor.current = at;
  }, []);

  /**
   * P or S from the keyboard: at the mouse, on the channel under it. With the mouse off the traces,
   * P goes to the vertical's first STA/LTA trigger (where a P onset usually is) and S is not placed:
   * the trigger says nothing about the S arrival, so a guess there would sit on the P.
   * @param lead the vertical's traces (where P goes with the mouse off the traces)
   */
  const keyPick = (which: 'P' | 'S', lead: TracesResponse['channels'][number] | undefined) => {
    setPhase(which);
    const at = cursor.current;
    if (at) return placePick(at.streamId, at.timeS, which);
    const firstTrigger = lead?.triggers[0]?.on;
    if (which === 'P' && lead && firstTrigger !== undefined) return placePick(lead.streamId, firstTrigger, 'P');
    toast.notify({
      tone: 'warn',
      title: `Point at a trace to place ${which === 'S' ? 'an S' : 'a P'} pick`,
      body: which === 'S' ? 'S goes where the mouse is, on the channel under it; clicking a trace places one too.' : 'No STA/LTA trigger on the vertical to place P at.',
      durationMs: 4000,
    });
  };

  /** Zooms by `factor` (0.5 in, 2 out) around the mouse, or the middle of the view. */
  const zoom = (factor: number) => {
    const from = view?.from ?? 0;
    const to = view?.to ?? durationS;
    const centre = cursor.current?.timeS ?? (from + to) / 2;
    const half = Math.min(durationS / 2, ((to - from) * factor) / 2);
    if (half * 2 >= durationS - 1e-6) return setView(null);
    const f = Math.max(0, Math.min(durationS - 2 * half, centre - half));
    setView({ from: f, to: f + 2 * half });
  };

  return { view, resetZoom: () => setView(null), phase, onPick, onZoom, onCursor, keyPick, zoom };
}
