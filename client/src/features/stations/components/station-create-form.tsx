import { zodResolver } from '@hookform/resolvers/zod';
import { useMutation, useQueryClient } from '@tanstack/react-query';
import { useForm, type FieldPath } from 'react-hook-form';
import { useNavigate } from 'react-router';
import { z } from 'zod';
import { stationCreateSchema, type StationCreateInput } from '@shared/schemas/station';
import { Button } from '@client/components/ui/button';
import { FormField } from '@client/components/ui/form-field';
import { Input } from '@client/components/ui/input';
import { paths } from '@client/config/paths';
import { stationDetailClientSchema } from '@client/features/stations/api/stations';
import { ApiError, apiRequest } from '@client/lib/api-client';
import { queryKeys } from '@client/lib/query-keys';

type Output = z.output<typeof stationCreateSchema>;
const num = { valueAsNumber: true } as const;

/** Registers a station (FDSN codes checked as the server checks them), then opens its page. */
export function StationCreateForm({ onCancel }: { onCancel: () => void }) {
  const form = useForm<StationCreateInput, unknown, Output>({ resolver: zodResolver(stationCreateSchema), defaultValues: { network: 'XX', siteDescription: '' }, mode: 'onBlur' });
  const { register, handleSubmit, formState, setError } = form;
  const qc = useQueryClient();
  const navigate = useNavigate();
  const create = useMutation({
    mutationFn: (body: Output) => apiRequest(z.object({ station: stationDetailClientSchema }), '/api/stations', { method: 'POST', body }),
    onSuccess: async (res) => {
      await qc.invalidateQueries({ queryKey: queryKeys.stations.all });
      await navigate(`${paths.station.href}/${res.station.id}`);
    },
  });
  const e = formState.errors;
  const onSubmit = handleSubmit(async (value) => {
    try {
      await create.mutateAsync(value);
    } catch (err) {
      if (err instanceof ApiError) {
        const issues = err.issues.length ? err.issues : [{ path: err.code === 'conflict' ? 'code' : 'root', message: err.message }];
        for (const i of issues) setError(i.path as FieldPath<StationCreateInput>, { type: 'server', message: i.message });
      } else setError('root', { message: err instanceof Error ? err.message : String(err) });
    }
  });
  return (
    <form onSubmit={(ev) => void onSubmit(ev)} noValidate aria-labelledby="create-title" className="flex flex-col gap-3 rounded-sm border border-line bg-surface px-4 py-3">
      <h2 id="create-title" className="text-md font-semibold">
        Register a station
      </h2>
      <div className="grid grid-cols-[repeat(auto-fill,minmax(11rem,1fr))] items-end gap-3">
        <FormField label="Network code" hint="1–2 letters or digits" error={e.network?.message}>
          {(p) => <Input {...p} mono {...register('network')} />}
        </FormField>
        <FormField label="Station code" hint="1–5 letters or digits" error={e.code?.message}>
          {(p) => <Input {...p} mono {...register('code')} />}
        </FormField>
        <FormField label="Name" error={e.name?.message}>
          {(p) => <Input {...p} {...register('name')} />}
        </FormField>
        <FormField label="Latitude (°)" error={e.latitude?.message}>
          {(p) => <Input {...p} type="number" step="any" mono {...register('latitude', num)} />}
        </FormField>
        <FormField label="Longitude (°)" error={e.longitude?.message}>
          {(p) => <Input {...p} type="number" step="any" mono {...register('longitude', num)} />}
        </FormField>
        <FormField label="Elevation (m)" error={e.elevationM?.message}>
          {(p) => <Input {...p} type="number" step="any" mono {...register('elevationM', num)} />}
        </FormField>
      </div>
      <FormField label="Site description" optional error={e.siteDescription?.message}>
        {(p) => <Input {...p} {...register('siteDescription')} />}
      </FormField>
      {e.root?.message ? (
        <p role="alert" className="text-sm text-danger">
          {e.root.message}
        </p>
      ) : null}
      <div className="flex gap-2">
        <Button type="submit" variant="primary" disabled={create.isPending}>
          Register
        </Button>
        <Button variant="quiet" onClick={onCancel}>
          Cancel
        </Button>
      </div>
    </form>
  );
}
