import { zodResolver } from '@hookform/resolvers/zod';
import { useForm } from 'react-hook-form';
import { Link } from 'react-router';
import { z } from 'zod';
import { lazySchema } from '@shared/schemas/lazy-schema';
import { authPagePaths } from '@shared/auth/links';
import { emailSchema } from '@shared/auth/schemas';
import { Button } from '@client/components/ui/button';
import { FormField } from '@client/components/ui/form-field';
import { Input } from '@client/components/ui/input';
import { ApiError } from '@client/lib/api-client';
import { useSignIn } from '@client/features/auth/api/session';
import { FormMessage } from './auth-layout';

const signInFormSchema = lazySchema(() => z.object({ email: emailSchema, password: z.string().min(1, 'enter your password') }));
type SignInValues = z.input<typeof signInFormSchema>;

/** Where to go after signing in: a local path from `?next=`, else home. Never another site. */
export function safeNext(search: string): string {
  const next = new URLSearchParams(search).get('next');
  return next && next.startsWith('/') && !next.startsWith('//') && !next.startsWith('/\\') ? next : '/';
}

/**
 * The sign-in form: a real form with labelled e-mail and password inputs (type="email",
 * type="password", autocomplete hints) so browsers and password managers treat it as one.
 */
export function SignInForm({ onSignedIn }: { onSignedIn: () => void }) {
  const signIn = useSignIn();
  const { register, handleSubmit, formState } = useForm<SignInValues>({ resolver: zodResolver(signInFormSchema), defaultValues: { email: '', password: '' } });
  const error = signIn.error instanceof ApiError ? signIn.error : null;
  return (
    <form
      method="post"
      noValidate
      className="flex flex-col gap-4"
      onSubmit={handleSubmit(async (values) => {
        await signIn.mutateAsync({ email: values.email, password: values.password }).then(onSignedIn, () => {});
      })}
    >
      {error ? (
        <FormMessage tone="error">
          {error.code === 'rate_limited' ? error.message : error.code === 'sign_in_failed' ? 'E-mail or password is not right.' : error.message}
        </FormMessage>
      ) : null}
      <FormField label="E-mail" error={formState.errors.email?.message}>
        {(p) => <Input {...p} type="email" autoComplete="username" inputMode="email" autoFocus {...register('email')} />}
      </FormField>
      <FormField label="Password" error={formState.errors.password?.message}>
        {(p) => <Input {...p} type="password" autoComplete="current-password" {...register('password')} />}
      </FormField>
      <div className="flex items-center justify-between gap-3">
        <Button type="submit" variant="primary" disabled={signIn.isPending}>
          {signIn.isPending ? 'Signing in…' : 'Sign in'}
        </Button>
        <Link to={authPagePaths.forgotPassword} className="text-sm">
          Forgot your password?
        </Link>
      </div>
    </form>
  );
}
