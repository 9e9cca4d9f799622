import { zodResolver } from '@hookform/resolvers/zod';
import { useForm } from 'react-hook-form';
import type { z } from 'zod';
import { forgotPasswordSchema } from '@shared/auth/schemas';
import { Button } from '@client/components/ui/button';
import { FormField } from '@client/components/ui/form-field';
import { Input } from '@client/components/ui/input';
import { ApiError } from '@client/lib/api-client';
import { useForgotPassword } from '@client/features/auth/api/session';
import { FormMessage } from './auth-layout';

type ForgotValues = z.input<typeof forgotPasswordSchema>;

/** Asks for a reset link. The answer is the same whether or not the address has an account. */
export function ForgotPasswordForm() {
  const forgot = useForgotPassword();
  const { register, handleSubmit, formState } = useForm<ForgotValues>({ resolver: zodResolver(forgotPasswordSchema), defaultValues: { email: '' } });
  if (forgot.isSuccess) return <FormMessage tone="ok">{forgot.data.message}</FormMessage>;
  return (
    <form noValidate className="flex flex-col gap-4" onSubmit={handleSubmit((v) => forgot.mutate({ email: v.email }))}>
      {forgot.error instanceof ApiError ? <FormMessage tone="error">{forgot.error.message}</FormMessage> : null}
      <FormField label="E-mail" error={formState.errors.email?.message} hint="The address you sign in with.">
        {(p) => <Input {...p} type="email" autoComplete="username" autoFocus {...register('email')} />}
      </FormField>
      <Button type="submit" variant="primary" disabled={forgot.isPending}>
        {forgot.isPending ? 'Sending…' : 'Send me a reset link'}
      </Button>
    </form>
  );
}
