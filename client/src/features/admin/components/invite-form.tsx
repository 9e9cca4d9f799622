import { zodResolver } from '@hookform/resolvers/zod';
import { useForm } from 'react-hook-form';
import { z } from 'zod';
import { lazySchema } from '@shared/schemas/lazy-schema';
import { roleLabels, roles, roleSchema } from '@shared/auth/roles';
import { displayNameSchema, emailSchema, type StationOption } from '@shared/auth/schemas';
import { Button } from '@client/components/ui/button';
import { Checkbox } from '@client/components/ui/checkbox';
import { FormField } from '@client/components/ui/form-field';
import { Input } from '@client/components/ui/input';
import { useToast } from '@client/components/ui/toast';
import { ApiError } from '@client/lib/api-client';
import { useInvite } from '@client/features/admin/api/admin';

/** The invite form's fields (checkbox groups give strings; station ids become numbers on submit). */
export const inviteFormSchema = lazySchema(() =>
  z.object({
    email: emailSchema,
    displayName: displayNameSchema,
    roles: z.array(roleSchema, { error: 'choose at least one role' }).min(1, 'choose at least one role'),
    stationIds: z.array(z.string()),
  }),
);
type InviteValues = z.input<typeof inviteFormSchema>;

/** Invite a person by e-mail with roles (and stations when operator); the link works 72 h, once. */
export function InviteForm({ stations, mailboxInUse }: { stations: StationOption[]; mailboxInUse: boolean }) {
  const invite = useInvite();
  const toast = useToast();
  const { register, handleSubmit, formState, watch, reset, setError } = useForm<InviteValues>({
    resolver: zodResolver(inviteFormSchema),
    defaultValues: { email: '', displayName: '', roles: [], stationIds: [] },
  });
  const isOperator = (watch('roles') ?? []).includes('operator');
  return (
    <form
      noValidate
      aria-labelledby="invite-heading"
      className="flex flex-col gap-4 rounded-sm border border-line bg-surface p-4"
      onSubmit={handleSubmit(async (v) => {
        try {
          const res = await invite.mutateAsync({ email: v.email, displayName: v.displayName, roles: v.roles, stationIds: isOperator ? v.stationIds.map(Number) : [] });
          reset();
          toast.notify({
            tone: 'ok',
            title: `Invitation sent to ${res.invitation.email}`,
            body: mailboxInUse ? 'Mail goes to the local test mail server: open Mailbox to see it.' : `The link works until ${res.invitation.expiresAt}.`,
          });
        } catch (err) {
          if (err instanceof ApiError) {
            const field = err.message.split(':')[0];
            if (field === 'email' || field === 'stationIds' || field === 'roles' || field === 'displayName') setError(field, { message: err.message.slice(field.length + 1).trim() });
            else setError('root', { message: err.message });
          } else setError('root', { message: 'The invitation could not be sent; try again.' });
        }
      })}
    >
      <h2 id="invite-heading" className="text-md font-semibold">
        Invite a person
      </h2>
      {formState.errors.root?.message ? (
        <p role="alert" className="text-sm text-danger">
          {formState.errors.root.message}
        </p>
      ) : null}
      <div className="grid gap-4 sm:grid-cols-2">
        <FormField label="E-mail" error={formState.errors.email?.message}>
          {(p) => <Input {...p} type="email" autoComplete="off" {...register('email')} />}
        </FormField>
        <FormField label="Name" error={formState.errors.displayName?.message} hint="As the app shows it; they can keep it.">
          {(p) => <Input {...p} autoComplete="off" {...register('displayName')} />}
        </FormField>
      </div>
      <fieldset className="flex flex-col gap-1.5" aria-describedby={formState.errors.roles ? 'invite-roles-error' : undefined}>
        <legend className="pb-1 text-sm font-medium">Roles</legend>
        {roles.map((r) => (
          <Checkbox key={r} value={r} label={roleLabels[r]} {...register('roles')} />
        ))}
        {formState.errors.roles?.message ? (
          <p id="invite-roles-error" className="text-sm text-danger">
            <span aria-hidden="true" className="mr-1 font-mono font-semibold">!</span>
            {formState.errors.roles.message}
          </p>
        ) : null}
      </fieldset>
      {isOperator ? (
        <fieldset className="flex flex-col gap-1.5">
          <legend className="pb-1 text-sm font-medium">Stations for the operator</legend>
          {stations.length === 0 ? <p className="text-sm text-ink-muted">No stations are registered yet.</p> : null}
          <div className="grid grid-cols-[repeat(auto-fill,minmax(14rem,1fr))] gap-1.5">
            {stations.map((s) => (
              <Checkbox key={s.id} value={String(s.id)} label={<><span className="font-mono">{`${s.network}.${s.code}`}</span> {s.name}</>} {...register('stationIds')} />
            ))}
          </div>
          {formState.errors.stationIds?.message ? <p className="text-sm text-danger">{formState.errors.stationIds.message}</p> : null}
        </fieldset>
      ) : null}
      <div>
        <Button type="submit" variant="primary" disabled={invite.isPending}>
          {invite.isPending ? 'Sending…' : 'Send invitation'}
        </Button>
      </div>
    </form>
  );
}
