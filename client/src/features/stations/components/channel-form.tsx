import { zodResolver } from '@hookform/resolvers/zod';
import { useMutation, useQueryClient } from '@tanstack/react-query';
import { useForm, type FieldPath } from 'react-hook-form';
import { z } from 'zod';
import { channelInputSchema, type ChannelInput } from '@shared/schemas/station';
import { Button } from '@client/components/ui/button';
import { FormField } from '@client/components/ui/form-field';
import { Input } from '@client/components/ui/input';
import { stationDetailClientSchema } from '@client/features/stations/api/stations';
import { ApiError, apiRequest } from '@client/lib/api-client';
import { queryKeys } from '@client/lib/query-keys';

type Output = z.output<typeof channelInputSchema>;
const num = { valueAsNumber: true } as const;
/** An empty number input gives NaN; treat it as "not given". */
const optionalNumber = { setValueAs: (v: unknown) => (v === '' || v === null || v === undefined ? null : Number(v)) } as const;

/** Adds a channel (or replaces the one with the same location and code) by hand. */
export function ChannelForm({ stationId }: { stationId: number }) {
  const form = useForm<ChannelInput, unknown, Output>({ resolver: zodResolver(channelInputSchema), defaultValues: { location: '00', sensitivityInputUnits: 'm/s' }, mode: 'onBlur' });
  const { register, handleSubmit, formState, setError, reset } = form;
  const qc = useQueryClient();
  const save = useMutation({
    mutationFn: (body: Output) => apiRequest(z.object({ station: stationDetailClientSchema }), `/api/stations/${stationId}/channels`, { method: 'POST', body }),
    onSuccess: () => qc.invalidateQueries({ queryKey: queryKeys.stations.all }),
  });
  const e = formState.errors;
  const onSubmit = handleSubmit(async (value) => {
    try {
      await save.mutateAsync(value);
      reset();
    } catch (err) {
      if (err instanceof ApiError && err.issues.length) {
        for (const i of err.issues) setError(i.path as FieldPath<ChannelInput>, { type: 'server', message: i.message });
      } else setError('root', { message: err instanceof Error ? err.message : String(err) });
    }
  });
  return (
    <form onSubmit={(ev) => void onSubmit(ev)} noValidate aria-label="Add a channel" className="flex flex-col gap-2">
      <div className="grid grid-cols-[repeat(auto-fill,minmax(9rem,1fr))] items-end gap-3">
        <FormField label="Location" hint="0–2 characters" error={e.location?.message}>
          {(p) => <Input {...p} mono {...register('location')} />}
        </FormField>
        <FormField label="Channel" hint="3 characters, e.g. HHZ" error={e.code?.message}>
          {(p) => <Input {...p} mono {...register('code')} />}
        </FormField>
        <FormField label="Rate (Hz)" error={e.sampleRateHz?.message}>
          {(p) => <Input {...p} type="number" step="any" mono {...register('sampleRateHz', num)} />}
        </FormField>
        <FormField label="Sensitivity (counts per unit)" optional error={e.sensitivity?.message}>
          {(p) => <Input {...p} type="number" step="any" mono {...register('sensitivity', optionalNumber)} />}
        </FormField>
        <FormField label="at (Hz)" optional error={e.sensitivityFrequencyHz?.message}>
          {(p) => <Input {...p} type="number" step="any" mono {...register('sensitivityFrequencyHz', optionalNumber)} />}
        </FormField>
        <FormField label="Input units" optional error={e.sensitivityInputUnits?.message}>
          {(p) => <Input {...p} mono {...register('sensitivityInputUnits')} />}
        </FormField>
      </div>
      {e.root?.message ? (
        <p role="alert" className="text-sm text-danger">
          {e.root.message}
        </p>
      ) : null}
      <div>
        <Button type="submit" disabled={save.isPending}>
          Add or replace channel
        </Button>
      </div>
    </form>
  );
}

/** Removes a channel. */
export function useDeleteChannel(stationId: number) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (channelId: number) => apiRequest(z.null(), `/api/stations/${stationId}/channels/${channelId}`, { method: 'DELETE' }),
    onSuccess: () => qc.invalidateQueries({ queryKey: queryKeys.stations.all }),
  });
}
