import { zodResolver } from '@hookform/resolvers/zod';
import { useMemo } from 'react';
import { useFieldArray, useForm, type FieldPath } from 'react-hook-form';
import type { z } from 'zod';
import { processingProfileSchema, type ProcessingProfile } from '@shared/schemas/processing-profile';
import { profileNyquistIssues, type ChannelView } from '@shared/schemas/station';
import { Button } from '@client/components/ui/button';
import { FormField } from '@client/components/ui/form-field';
import { Input } from '@client/components/ui/input';
import { Select } from '@client/components/ui/select';
import { useToast } from '@client/components/ui/toast';
import { useSaveProfile } from '@client/features/stations/api/stations';
import { ApiError } from '@client/lib/api-client';

type ProfileInput = z.input<typeof processingProfileSchema>;

/**
 * The profile form's schema: the shared profile schema plus the station's Nyquist rule
 * (profileNyquistIssues), so the form refuses what the server would, with the same words.
 */
export function profileFormSchema(channels: ReadonlyArray<Pick<ChannelView, 'streamId' | 'sampleRateHz'>>) {
  return processingProfileSchema.superRefine((profile, ctx) => {
    for (const issue of profileNyquistIssues(profile, channels)) {
      ctx.addIssue({ code: 'custom', path: issue.path.split('.').map((p) => (/^\d+$/.test(p) ? Number(p) : p)), message: issue.message });
    }
  });
}

const num = { valueAsNumber: true } as const;

/**
 * Editor of a station's processing profile: bands, band-reject filters, STA/LTA and thresholds
 * (react-hook-form + the shared zod schema; field messages from the form and from the server).
 */
export function ProfileEditor({ stationId, profile, channels, canEdit }: { stationId: number; profile: ProcessingProfile; channels: ChannelView[]; canEdit: boolean }) {
  const schema = useMemo(() => profileFormSchema(channels), [channels]);
  const form = useForm<ProfileInput, unknown, ProcessingProfile>({ resolver: zodResolver(schema), defaultValues: profile, mode: 'onBlur' });
  const { register, handleSubmit, formState, setError, control } = form;
  const rejects = useFieldArray({ control, name: 'bandReject' });
  const save = useSaveProfile(stationId);
  const toast = useToast();
  const errors = formState.errors;
  const slowest = channels.length ? Math.min(...channels.map((c) => c.sampleRateHz)) : null;

  const onSubmit = handleSubmit(async (value) => {
    try {
      await save.mutateAsync(value);
      toast.notify({ tone: 'ok', title: 'Profile saved', body: 'New uploads are analysed with it.' });
    } catch (err) {
      if (err instanceof ApiError && err.issues.length > 0) {
        for (const issue of err.issues) {
          const path = issue.path.replace(/^profile\./, '') as FieldPath<ProfileInput>;
          setError(path, { type: 'server', message: issue.message });
        }
      } else toast.notify({ tone: 'danger', title: 'Profile not saved', body: err instanceof Error ? err.message : String(err) });
    }
  });

  const disabled = !canEdit || save.isPending;
  return (
    <form onSubmit={(e) => void onSubmit(e)} className="flex flex-col gap-4" aria-label="Processing profile" noValidate>
      <p className="text-sm text-ink-muted">
        Band edges must stay below 0.45·fs{slowest !== null ? ` = ${(0.45 * slowest).toFixed(2)} Hz for the slowest channel (${slowest} Hz)` : ''}. Frequencies in Hz, times in s.
      </p>
      <fieldset disabled={disabled} className="grid grid-cols-[repeat(auto-fill,minmax(11rem,1fr))] items-end gap-3">
        <legend className="pb-1 text-md font-semibold">Bands (Butterworth band-pass)</legend>
        <FormField label="Low band from" error={errors.bands?.low?.fmin?.message ?? errors.bands?.low?.message}>
          {(p) => <Input {...p} type="number" step="any" mono {...register('bands.low.fmin', num)} />}
        </FormField>
        <FormField label="Low band to" error={errors.bands?.low?.fmax?.message}>
          {(p) => <Input {...p} type="number" step="any" mono {...register('bands.low.fmax', num)} />}
        </FormField>
        <FormField label="High band from" error={errors.bands?.high?.fmin?.message ?? errors.bands?.high?.message}>
          {(p) => <Input {...p} type="number" step="any" mono {...register('bands.high.fmin', num)} />}
        </FormField>
        <FormField label="High band to" error={errors.bands?.high?.fmax?.message}>
          {(p) => <Input {...p} type="number" step="any" mono {...register('bands.high.fmax', num)} />}
        </FormField>
        <FormField label="Filter order N (2N poles)" error={errors.bands?.order?.message}>
          {(p) => <Input {...p} type="number" step="1" mono {...register('bands.order', num)} />}
        </FormField>
        <FormField label="At or above 0.45·fs" error={errors.bands?.nyquistPolicy?.message}>
          {(p) => (
            <Select {...p} {...register('bands.nyquistPolicy')}>
              <option value="refuse">refuse the band</option>
              <option value="cap">lower the edge, with a warning</option>
            </Select>
          )}
        </FormField>
      </fieldset>

      <fieldset disabled={disabled} className="flex flex-col gap-2">
        <legend className="pb-1 text-md font-semibold">Band-reject filters (known machinery lines)</legend>
        {rejects.fields.length === 0 ? <p className="text-sm text-ink-muted">None.</p> : null}
        {rejects.fields.map((field, i) => (
          <div key={field.id} className="grid grid-cols-[repeat(auto-fill,minmax(9rem,1fr))] items-end gap-3">
            <FormField label={`Filter ${i + 1} from`} error={errors.bandReject?.[i]?.fmin?.message ?? errors.bandReject?.[i]?.message}>
              {(p) => <Input {...p} type="number" step="any" mono {...register(`bandReject.${i}.fmin`, num)} />}
            </FormField>
            <FormField label="to" error={errors.bandReject?.[i]?.fmax?.message}>
              {(p) => <Input {...p} type="number" step="any" mono {...register(`bandReject.${i}.fmax`, num)} />}
            </FormField>
            <FormField label="Order" error={errors.bandReject?.[i]?.order?.message}>
              {(p) => <Input {...p} type="number" step="1" mono {...register(`bandReject.${i}.order`, num)} />}
            </FormField>
            <FormField label="Why" optional error={errors.bandReject?.[i]?.label?.message}>
              {(p) => <Input {...p} placeholder="pump, 25 Hz" {...register(`bandReject.${i}.label`)} />}
            </FormField>
            <Button variant="quiet" size="sm" onClick={() => rejects.remove(i)}>
              Remove filter {i + 1}
            </Button>
          </div>
        ))}
        <div>
          <Button size="sm" onClick={() => rejects.append({ fmin: 24.5, fmax: 25.5, order: 4, label: '' })}>
            Add a band-reject filter
          </Button>
        </div>
      </fieldset>

      <fieldset disabled={disabled} className="grid grid-cols-[repeat(auto-fill,minmax(11rem,1fr))] items-end gap-3">
        <legend className="pb-1 text-md font-semibold">STA/LTA</legend>
        <FormField label="Method" error={errors.staLta?.method?.message}>
          {(p) => (
            <Select {...p} {...register('staLta.method')}>
              <option value="classic">classic</option>
              <option value="recursive">recursive</option>
            </Select>
          )}
        </FormField>
        <FormField label="STA window (s)" error={errors.staLta?.staS?.message ?? errors.staLta?.message}>
          {(p) => <Input {...p} type="number" step="any" mono {...register('staLta.staS', num)} />}
        </FormField>
        <FormField label="LTA window (s)" error={errors.staLta?.ltaS?.message}>
          {(p) => <Input {...p} type="number" step="any" mono {...register('staLta.ltaS', num)} />}
        </FormField>
        <FormField label="Trigger on" error={errors.staLta?.on?.message}>
          {(p) => <Input {...p} type="number" step="any" mono {...register('staLta.on', num)} />}
        </FormField>
        <FormField label="Trigger off" error={errors.staLta?.off?.message}>
          {(p) => <Input {...p} type="number" step="any" mono {...register('staLta.off', num)} />}
        </FormField>
      </fieldset>

      <fieldset disabled={disabled} className="grid grid-cols-[repeat(auto-fill,minmax(11rem,1fr))] items-end gap-3">
        <legend className="pb-1 text-md font-semibold">Thresholds</legend>
        <FormField label="Event evidence from z" error={errors.thresholds?.eventZ?.message}>
          {(p) => <Input {...p} type="number" step="any" mono {...register('thresholds.eventZ', num)} />}
        </FormField>
        <FormField label="Ordinary noise below z" error={errors.thresholds?.noiseZ?.message}>
          {(p) => <Input {...p} type="number" step="any" mono {...register('thresholds.noiseZ', num)} />}
        </FormField>
        <FormField label="Noise windows before own baseline" error={errors.thresholds?.minBaselineWindows?.message}>
          {(p) => <Input {...p} type="number" step="1" mono {...register('thresholds.minBaselineWindows', num)} />}
        </FormField>
      </fieldset>

      {canEdit ? (
        <div className="flex gap-2">
          <Button type="submit" variant="primary" disabled={save.isPending}>
            {save.isPending ? 'Saving…' : 'Save profile'}
          </Button>
          <Button variant="quiet" onClick={() => form.reset(profile)}>
            Undo changes
          </Button>
        </div>
      ) : (
        <p className="text-sm text-ink-muted">Only the station’s operators and admins may change the profile.</p>
      )}
    </form>
  );
}
