import { zodResolver } from '@hookform/resolvers/zod';
import type { Ref } from 'react';
import { useFieldArray, useForm, type UseFormReturn } from 'react-hook-form';
import { z } from 'zod';
import {
  commonEventTypes,
  distanceClasses,
  eventLabelSchema,
  noiseReasons,
  pickOnsets,
  pickPolarities,
  quakemlEventTypes,
  typeCertainties,
} from '@shared/schemas/label';
import { Button } from '@client/components/ui/button';
import { FormField } from '@client/components/ui/form-field';
import { Kbd } from '@client/components/ui/kbd';
import { Select } from '@client/components/ui/select';

/** The review form: an event label (QuakeML type, certainty, distance class, picks, note) and, for dismissals, a noise reason. */
export const reviewFormSchema = eventLabelSchema.extend({
  distanceClass: z.enum(distanceClasses).nullable().default(null),
  noiseReason: z.enum(noiseReasons).default('unknown noise'),
});

/** Form values as entered. */
export type ReviewFormInput = z.input<typeof reviewFormSchema>;
/** Form values after validation. */
export type ReviewFormValues = z.output<typeof reviewFormSchema>;

/** The form's values before anything is entered (also what "unsaved work" is measured against). */
export const reviewFormDefaults = { eventType: 'earthquake', certainty: 'suspected', distanceClass: null, picks: [], note: '', noiseReason: 'unknown noise' } as const satisfies ReviewFormValues;

/** The form's hook (react-hook-form with the shared zod schema). */
export function useReviewForm(initial?: Partial<ReviewFormInput>): UseFormReturn<ReviewFormInput, unknown, ReviewFormValues> {
  return useForm<ReviewFormInput, unknown, ReviewFormValues>({
    resolver: zodResolver(reviewFormSchema),
    defaultValues: { ...reviewFormDefaults, picks: [], ...initial },
  });
}

/** Props of <LabelForm>. */
export type LabelFormProps = {
  form: UseFormReturn<ReviewFormInput, unknown, ReviewFormValues>;
  /** Whether the analyst holds the claim (else the form is read-only with a hint). */
  canWrite: boolean;
  /** The viewer's role may not label at all (an operator): the hint says so instead of "claim it". */
  viewOnly?: boolean;
  busy: boolean;
  onLabel: (v: ReviewFormValues) => void;
  onDismiss: (v: ReviewFormValues) => void;
  /** The Label button (the review screen focuses it after key M, so Enter confirms the taken label). */
  labelButtonRef?: Ref<HTMLButtonElement>;
};

/**
 * The label form. Enter on any field (or the Label button) labels the item with the type chosen;
 * number keys 1–6 outside the form pick a common type and label at once; D dismisses with the
 * noise reason chosen here. Picks are placed on the traces and edited here (onset, polarity).
 */
export function LabelForm({ form, canWrite, viewOnly = false, busy, onLabel, onDismiss, labelButtonRef }: LabelFormProps) {
  const { register, handleSubmit, control, formState } = form;
  const picks = useFieldArray({ control, name: 'picks' });
  // Picks are placed from outside the form (keys, clicks) with setValue: read their values, not the field array's snapshots.
  const values = form.watch('picks') ?? [];
  const errors = formState.errors;
  return (
    <form onSubmit={handleSubmit(onLabel)} aria-label="Label this item" className="flex flex-col gap-3">
      <fieldset disabled={!canWrite || busy} className="flex flex-col gap-3">
        <div className="grid grid-cols-2 gap-3">
          <FormField label="Event type (QuakeML)" error={errors.eventType?.message}>
            {(p) => (
              <Select {...p} {...register('eventType')}>
                <optgroup label="Common (keys 1–6)">
                  {commonEventTypes.map((t, i) => (
                    <option key={t} value={t}>
                      {i + 1} · {t}
                    </option>
                  ))}
                </optgroup>
                <optgroup label="All QuakeML 1.2 types">
                  {quakemlEventTypes
                    .filter((t) => !(commonEventTypes as readonly string[]).includes(t))
                    .map((t) => (
                      <option key={t} value={t}>
                        {t}
                      </option>
                    ))}
                </optgroup>
              </Select>
            )}
          </FormField>
          <FormField label="Type certainty" error={errors.certainty?.message}>
            {(p) => (
              <Select {...p} {...register('certainty')}>
                {typeCertainties.map((c) => (
                  <option key={c}>{c}</option>
                ))}
              </Select>
            )}
          </FormField>
          <FormField label="Distance class" optional error={errors.distanceClass?.message}>
            {(p) => (
              <Select {...p} {...register('distanceClass', { setValueAs: (v: unknown) => (v === '' || v === null ? null : v) })}>
                <option value="">not judged</option>
                {distanceClasses.map((c) => (
                  <option key={c}>{c}</option>
                ))}
              </Select>
            )}
          </FormField>
          <FormField label="Noise reason (for D, dismiss)" error={errors.noiseReason?.message}>
            {(p) => (
              <Select {...p} {...register('noiseReason')}>
                {noiseReasons.map((c) => (
                  <option key={c}>{c}</option>
                ))}
              </Select>
            )}
          </FormField>
        </div>
        <div>
          <p className="pb-1 text-sm font-medium">Picks</p>
          {picks.fields.length === 0 ? (
            <p className="text-sm text-ink-muted">
              None. Point at a trace and press <Kbd>P</Kbd> or <Kbd>S</Kbd> to place one there, on that channel (P alone, off the traces, goes to the first trigger), or click a trace.
            </p>
          ) : (
            <ul className="flex flex-col gap-1">
              {picks.fields.map((f, i) => (
                <li key={f.id} className="flex flex-wrap items-center gap-2 text-sm">
                  <span className="w-5 font-mono font-semibold">{values[i]?.phase ?? f.phase}</span>
                  {/* ISO 8601 with milliseconds, as every time on screen (the pick keeps its microseconds). */}
                  <span className="font-mono">{(values[i]?.time ?? f.time).replace(/(\.\d{3})\d*Z$/, '$1Z')}</span>
                  <span className="font-mono text-ink-muted">{values[i]?.streamId ?? f.streamId}</span>
                  <label className="flex items-center gap-1">
                    <span className="sr-only">Onset of pick {i + 1}</span>
                    <Select className="h-7 w-32" {...register(`picks.${i}.onset` as const)}>
                      {pickOnsets.map((o) => (
                        <option key={o}>{o}</option>
                      ))}
                    </Select>
                  </label>
                  <label className="flex items-center gap-1">
                    <span className="sr-only">Polarity of pick {i + 1}</span>
                    <Select className="h-7 w-32" {...register(`picks.${i}.polarity` as const)}>
                      {pickPolarities.map((o) => (
                        <option key={o}>{o}</option>
                      ))}
                    </Select>
                  </label>
                  <Button size="sm" variant="quiet" onClick={() => picks.remove(i)} aria-label={`Remove ${values[i]?.phase ?? f.phase} pick ${i + 1}`}>
                    Remove
                  </Button>
                </li>
              ))}
            </ul>
          )}
          {errors.picks?.message ? <p className="text-sm text-danger">{errors.picks.message}</p> : null}
        </div>
        <FormField label="Note" optional error={errors.note?.message}>
          {(p) => <textarea {...p} {...register('note')} rows={2} className="rounded-sm border border-line-strong bg-sunken px-2 py-1 text-base text-ink" />}
        </FormField>
        <div className="flex flex-wrap gap-2">
          <Button ref={labelButtonRef} type="submit" variant="primary" shortcut="Enter">
            Label
          </Button>
          <Button variant="secondary" shortcut="D" onClick={handleSubmit(onDismiss)}>
            Dismiss as noise
          </Button>
        </div>
      </fieldset>
      {viewOnly ? (
        <p className="text-sm text-ink-muted">Analysts and supervisors label items; your role can look at them.</p>
      ) : !canWrite ? (
        <p className="text-sm text-ink-muted">Claim the item (<Kbd>C</Kbd>) to label it.</p>
      ) : null}
    </form>
  );
}
