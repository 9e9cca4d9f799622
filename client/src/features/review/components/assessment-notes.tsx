import { useState } from 'react';
import type { z } from 'zod';
import type { reviewNoteSchema } from '@client/api/queue/candidate-events';
import { Button } from '@client/components/ui/button';
import { Select } from '@client/components/ui/select';
import { TriageCaution } from '@client/components/ui/triage-caution';
import type { AnalysisView } from '@client/features/review/api/get-item';
import { describeUnsaved, unsavedWork, type ReviewDraft } from '@client/features/review/lib/review-draft';
import { reviewFormDefaults } from './label-form';
import { SpectrumPanel } from './spectrum-panel';

/** The draft put back from this tab, with the way to throw it away. */
export function DraftBanner({ draft, onDiscard }: { draft: ReviewDraft; onDiscard: () => void }) {
  return (
    <section aria-label="Unsaved draft" className="flex flex-wrap items-center gap-2 rounded-sm border-[1.5px] border-warn bg-surface p-3 text-sm" data-testid="draft-restored" role="status">
      <p className="min-w-0 flex-1">
        <strong>Draft put back:</strong> {describeUnsaved(unsavedWork(draft.values, reviewFormDefaults))} not yet saved, kept in this tab since{' '}
        <time className="font-mono" dateTime={draft.savedAt}>{draft.savedAt.slice(11, 19)}Z</time>.
      </p>
      <Button size="sm" variant="quiet" onClick={onDiscard}>
        Discard draft
      </Button>
    </section>
  );
}

/** A supervisor's words when they sent the item back to the queue. */
export function ReturnNote({ note }: { note: NonNullable<z.infer<typeof reviewNoteSchema>['note']> & { returnComment: string } }) {
  return (
    <section aria-label="Returned by a supervisor" className="rounded-sm border-[1.5px] p-3" style={{ borderColor: 'var(--sf-state-returned)' }} data-testid="return-note">
      <h2 className="pb-1 text-md font-semibold">Returned to the queue</h2>
      <p className="text-sm text-ink-muted">
        by {note.returnedBy ?? 'a supervisor'}
        {note.returnedAt ? (
          <>
            {' '}
            at <time className="font-mono" dateTime={note.returnedAt}>{new Date(note.returnedAt).toISOString()}</time>
          </>
        ) : null}
      </p>
      <blockquote className="mt-1 border-l-2 border-line-strong pl-2 text-base whitespace-pre-wrap">{note.returnComment}</blockquote>
    </section>
  );
}

/** Why the engine flagged the item, with the triage caution. */
export function FlagReasons({ flag, reasons }: { flag: string; reasons: readonly string[] }) {
  return (
    <section className="rounded-sm border border-line bg-surface p-3">
      <h2 className="pb-1 text-md font-semibold">Why it is flagged {flag}</h2>
      <ul className="list-disc pl-5 text-sm">
        {reasons.map((r) => (
          <li key={r}>{r}</li>
        ))}
      </ul>
      <TriageCaution className="mt-2" />
    </section>
  );
}

/** The spectrum of one channel (the lead channel first), with a channel chooser. */
export function SpectrumSection({ analysis }: { analysis: AnalysisView }) {
  const [chosen, setChosen] = useState<string | null>(null);
  const channel = analysis.channels.find((c) => c.id === (chosen ?? analysis.leadChannel)) ?? analysis.channels[0];
  if (!channel) return null;
  return (
    <section className="rounded-sm border border-line bg-surface p-3">
      <div className="flex items-center justify-between gap-2 pb-1">
        <h2 className="text-md font-semibold">Spectrum</h2>
        <label className="flex items-center gap-2 text-sm">
          Channel
          <Select className="h-7" value={channel.id} onChange={(e) => setChosen(e.target.value)}>
            {analysis.channels.map((c) => (
              <option key={c.id}>{c.id}</option>
            ))}
          </Select>
        </label>
      </div>
      <SpectrumPanel channel={channel} />
    </section>
  );
}
