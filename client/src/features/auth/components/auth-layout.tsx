import type { ReactNode } from 'react';
import { SeisiftMark } from '@client/components/ui/seisift-mark';
import { ThemeSwitch } from '@client/components/ui/theme-switch';

/** Props of <AuthLayout>. */
export type AuthLayoutProps = { title: string; intro?: ReactNode; children: ReactNode; footer?: ReactNode };

/**
 * The frame of the pages used before signing in (sign-in, forgot password, set a password): the
 * mark and name, one narrow column with the heading and form, and the theme switch.
 */
export function AuthLayout({ title, intro, children, footer }: AuthLayoutProps) {
  return (
    <div className="flex min-h-dvh flex-col bg-canvas text-ink">
      <header className="flex h-11 items-center gap-2 border-b border-line bg-surface px-3">
        <SeisiftMark />
        <span className="text-md font-semibold tracking-wide">Seisift</span>
        <div className="ml-auto">
          <ThemeSwitch />
        </div>
      </header>
      <main id="main" className="flex flex-1 items-start justify-center px-4 py-12">
        <div className="flex w-full max-w-sm flex-col gap-5 rounded-sm border border-line bg-surface px-6 py-6">
          <div className="flex flex-col gap-1">
            <h1 className="text-xl font-semibold">{title}</h1>
            {intro ? <div className="text-base text-ink-muted">{intro}</div> : null}
          </div>
          {children}
          {footer ? <div className="border-t border-line pt-4 text-sm text-ink-muted">{footer}</div> : null}
        </div>
      </main>
    </div>
  );
}

/** A form-level message (error or notice) read out when it appears. */
export function FormMessage({ tone, children }: { tone: 'error' | 'ok'; children: ReactNode }) {
  return (
    <p role={tone === 'error' ? 'alert' : 'status'} className={tone === 'error' ? 'rounded-xs border border-danger bg-danger-wash px-3 py-2 text-sm text-danger' : 'rounded-xs border border-ok bg-ok-wash px-3 py-2 text-sm text-ink'}>
      <span className="mr-1 font-semibold">{tone === 'error' ? 'Not done:' : 'Done:'}</span>
      {children}
    </p>
  );
}
