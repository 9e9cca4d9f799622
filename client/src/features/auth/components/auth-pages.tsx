import { Link, Navigate, useLocation, useNavigate } from 'react-router';
import { authPagePaths } from '@shared/auth/links';
import { roleLabels } from '@shared/auth/roles';
import { Loading } from '@client/components/ui/skeleton';
import { ApiError } from '@client/lib/api-client';
import { invitationCheckSchema, resetCheckSchema, useTokenCheck } from '@client/features/auth/api/session';
import { useFragmentToken } from '@client/features/auth/hooks/use-fragment-token';
import { AuthLayout, FormMessage } from './auth-layout';
import { ForgotPasswordForm } from './forgot-password-form';
import { useCurrentMe } from './session-boundary';
import { SetPasswordForm } from './set-password-form';
import { safeNext, SignInForm } from './sign-in-form';

/** /sign-in: the sign-in page; a signed-in visitor goes straight on. */
export function SignInPage() {
  const me = useCurrentMe();
  const location = useLocation();
  const navigate = useNavigate();
  const next = safeNext(location.search);
  if (me) return <Navigate to={next} replace />;
  return (
    <AuthLayout
      title="Sign in to Seisift"
      intro="Waveform triage for your seismic network."
      footer={<>New here? An admin of your network sends you an invitation by e-mail.</>}
    >
      <SignInForm onSignedIn={() => navigate(next, { replace: true })} />
    </AuthLayout>
  );
}

/** /forgot-password: asks for a reset link by e-mail. */
export function ForgotPasswordPage() {
  return (
    <AuthLayout
      title="Forgot your password?"
      intro="Give the address you sign in with. If it has an account, a link to choose a new password arrives by e-mail; it works once, for 1 hour."
      footer={<Link to={authPagePaths.signIn}>Back to sign-in</Link>}
    >
      <ForgotPasswordForm />
    </AuthLayout>
  );
}

function LinkProblem({ error, what }: { error: unknown; what: string }) {
  const message = error instanceof ApiError ? error.message : `This ${what} link cannot be checked right now; try again.`;
  return <FormMessage tone="error">{message}</FormMessage>;
}

/** /reset-password#token=…: choose a new password from a reset link; other sessions end. */
export function ResetPasswordPage() {
  const token = useFragmentToken();
  const navigate = useNavigate();
  const check = useTokenCheck('reset', resetCheckSchema, token);
  return (
    <AuthLayout
      title="Choose a new password"
      intro="Setting it signs you in here and out everywhere else."
      footer={<Link to={authPagePaths.forgotPassword}>Ask for a new link</Link>}
    >
      {token === null ? (
        <FormMessage tone="error">This page needs the link from your e-mail; open the link again or ask for a new one.</FormMessage>
      ) : check.isPending ? (
        <Loading label="Checking the link…" rows={2} />
      ) : check.isError ? (
        <LinkProblem error={check.error} what="password reset" />
      ) : (
        <SetPasswordForm kind="reset" token={token} email={check.data.email} onDone={() => navigate('/', { replace: true })} />
      )}
    </AuthLayout>
  );
}

/** /welcome#token=…: accept an invitation by choosing a password; then signed in. */
export function WelcomePage() {
  const token = useFragmentToken();
  const navigate = useNavigate();
  const check = useTokenCheck('invitation', invitationCheckSchema, token);
  return (
    <AuthLayout title="Welcome to Seisift" footer={<Link to={authPagePaths.signIn}>I already have an account</Link>}>
      {token === null ? (
        <FormMessage tone="error">This page needs the link from your invitation e-mail; open the link again.</FormMessage>
      ) : check.isPending ? (
        <Loading label="Checking the invitation…" rows={2} />
      ) : check.isError ? (
        <LinkProblem error={check.error} what="invitation" />
      ) : (
        <>
          <p className="text-base">
            Hello <strong className="font-semibold">{check.data.displayName}</strong>: you are invited as {check.data.roles.map((r) => roleLabels[r]).join(', ')}. The link works until{' '}
            <span className="font-mono text-sm">{check.data.expiresAt}</span>.
          </p>
          <SetPasswordForm kind="invitation" token={token} email={check.data.email} onDone={() => navigate('/', { replace: true })} />
        </>
      )}
    </AuthLayout>
  );
}
