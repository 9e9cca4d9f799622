import { zodResolver } from '@hookform/resolvers/zod';
import { useForm } from 'react-hook-form';
import { z } from 'zod';
import { lazySchema } from '@shared/schemas/lazy-schema';
import { passwordMinLength, newPasswordSchema } from '@shared/auth/schemas';
import { Button } from '@client/components/ui/button';
import { FormField } from '@client/components/ui/form-field';
import { Input } from '@client/components/ui/input';
import { ApiError } from '@client/lib/api-client';
import { useSetPassword } from '@client/features/auth/api/session';
import { FormMessage } from './auth-layout';

/** The new-password pair, checked the way the server checks it (12+ characters) plus a repeat. */
export const setPasswordFormSchema = lazySchema(() =>
  z
    .object({ password: newPasswordSchema, repeat: z.string() })
    .refine((v) => v.password === v.repeat, { path: ['repeat'], message: 'the two passwords differ' }),
);
type SetPasswordValues = z.input<typeof setPasswordFormSchema>;

/** Props of <SetPasswordForm>. */
export type SetPasswordFormProps = {
  kind: 'reset' | 'invitation';
  token: string;
  /** The account's e-mail, shown read-only so password managers store the pair. */
  email: string;
  onDone: () => void;
};

/** Chooses a password from a one-time link (invitation or reset); the person is then signed in. */
export function SetPasswordForm({ kind, token, email, onDone }: SetPasswordFormProps) {
  const setPassword = useSetPassword(kind);
  const { register, handleSubmit, formState } = useForm<SetPasswordValues>({ resolver: zodResolver(setPasswordFormSchema), defaultValues: { password: '', repeat: '' } });
  const error = setPassword.error instanceof ApiError ? setPassword.error : null;
  return (
    <form noValidate className="flex flex-col gap-4" onSubmit={handleSubmit(async (v) => setPassword.mutateAsync({ token, password: v.password }).then(onDone, () => {}))}>
      {error ? <FormMessage tone="error">{error.message}</FormMessage> : null}
      <FormField label="E-mail">{(p) => <Input {...p} type="email" autoComplete="username" value={email} readOnly mono />}</FormField>
      <FormField label="New password" hint={`At least ${passwordMinLength} characters. A short sentence is easy to remember.`} error={formState.errors.password?.message}>
        {(p) => <Input {...p} type="password" autoComplete="new-password" autoFocus {...register('password')} />}
      </FormField>
      <FormField label="Repeat the new password" error={formState.errors.repeat?.message}>
        {(p) => <Input {...p} type="password" autoComplete="new-password" {...register('repeat')} />}
      </FormField>
      <Button type="submit" variant="primary" disabled={setPassword.isPending}>
        {setPassword.isPending ? 'Saving…' : kind === 'invitation' ? 'Set password and sign in' : 'Set new password and sign in'}
      </Button>
    </form>
  );
}
