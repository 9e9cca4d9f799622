import { zodResolver } from '@hookform/resolvers/zod';
import { useForm } from 'react-hook-form';
import { z } from 'zod';
import { newPasswordSchema, passwordMinLength } from '@shared/auth/schemas';
import { Button } from '@client/components/ui/button';
import { FormField } from '@client/components/ui/form-field';
import { Input } from '@client/components/ui/input';
import { useToast } from '@client/components/ui/toast';
import { ApiError } from '@client/lib/api-client';
import { useChangePassword } from '@client/features/account/api/account';

const changeFormSchema = z
  .object({ currentPassword: z.string().min(1, 'enter your current password'), newPassword: newPasswordSchema, repeat: z.string() })
  .refine((v) => v.newPassword === v.repeat, { path: ['repeat'], message: 'the two passwords differ' });
type ChangeValues = z.input<typeof changeFormSchema>;

/** Change your password (current one first); your other sessions end, this one stays. */
export function ChangePasswordForm({ email }: { email: string }) {
  const change = useChangePassword();
  const toast = useToast();
  const { register, handleSubmit, formState, reset, setError } = useForm<ChangeValues>({ resolver: zodResolver(changeFormSchema), defaultValues: { currentPassword: '', newPassword: '', repeat: '' } });
  return (
    <form
      noValidate
      className="flex max-w-sm flex-col gap-4"
      aria-labelledby="change-password-heading"
      onSubmit={handleSubmit(async (v) => {
        try {
          await change.mutateAsync({ currentPassword: v.currentPassword, newPassword: v.newPassword });
          reset();
          toast.notify({ tone: 'ok', title: 'Password changed', body: 'Your other sessions have ended.' });
        } catch (err) {
          if (err instanceof ApiError && err.issues.length) {
            for (const issue of err.issues) if (issue.path === 'currentPassword' || issue.path === 'newPassword') setError(issue.path, { message: issue.message });
          } else toast.notify({ tone: 'danger', title: 'Password not changed', body: err instanceof Error ? err.message : 'Try again.' });
        }
      })}
    >
      <h2 id="change-password-heading" className="text-md font-semibold">
        Change password
      </h2>
      {/* For password managers: the account the new password belongs to. */}
      <input type="email" name="username" autoComplete="username" value={email} readOnly hidden />
      <FormField label="Current password" error={formState.errors.currentPassword?.message}>
        {(p) => <Input {...p} type="password" autoComplete="current-password" {...register('currentPassword')} />}
      </FormField>
      <FormField label="New password" hint={`At least ${passwordMinLength} characters.`} error={formState.errors.newPassword?.message}>
        {(p) => <Input {...p} type="password" autoComplete="new-password" {...register('newPassword')} />}
      </FormField>
      <FormField label="Repeat the new password" error={formState.errors.repeat?.message}>
        {(p) => <Input {...p} type="password" autoComplete="new-password" {...register('repeat')} />}
      </FormField>
      <div>
        <Button type="submit" variant="primary" disabled={change.isPending}>
          {change.isPending ? 'Saving…' : 'Change password'}
        </Button>
      </div>
    </form>
  );
}
