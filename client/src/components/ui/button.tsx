import type { ComponentPropsWithRef, ReactNode } from 'react';
import { cx } from '@client/lib/cx';
import { Kbd } from './kbd';

/** Button looks: primary (one per view), secondary, quiet, and danger for destructive actions. */
export type ButtonVariant = 'primary' | 'secondary' | 'quiet' | 'danger';

/** Button heights: sm 28 px for dense rows, md 32 px. */
export type ButtonSize = 'sm' | 'md';

/** Props of <Button>: every native button prop plus look, size, an optional key hint and icon. */
export type ButtonProps = ComponentPropsWithRef<'button'> & {
  variant?: ButtonVariant;
  size?: ButtonSize;
  /** Shortcut shown inside the button, e.g. "D" for dismiss. Display only; bind the key yourself. */
  shortcut?: string;
  /** Decorative icon before the label. */
  icon?: ReactNode;
};

const variantClass: Record<ButtonVariant, string> = {
  primary: 'bg-accent text-on-accent border-accent hover:bg-accent-hover hover:border-accent-hover font-medium',
  secondary: 'bg-raised text-ink border-line-strong hover:bg-surface',
  quiet: 'bg-transparent text-ink border-transparent hover:bg-raised',
  danger: 'bg-danger-wash text-danger border-danger hover:bg-surface font-medium',
};

const sizeClass: Record<ButtonSize, string> = {
  sm: 'h-7 px-2 text-sm gap-1.5',
  md: 'h-8 px-3 text-base gap-2',
};

/** Shared class list so links styled as buttons look the same. */
export function buttonClass(variant: ButtonVariant = 'secondary', size: ButtonSize = 'md'): string {
  return cx(
    'inline-flex items-center justify-center whitespace-nowrap rounded-sm border select-none no-underline',
    'disabled:cursor-not-allowed disabled:opacity-55',
    variantClass[variant],
    sizeClass[size],
  );
}

/** A button. Defaults to type="button" so it never submits a form by accident. */
export function Button({ variant = 'secondary', size = 'md', shortcut, icon, className, children, type = 'button', ...rest }: ButtonProps) {
  return (
    <button type={type} className={cx(buttonClass(variant, size), className)} {...rest}>
      {icon}
      <span>{children}</span>
      {shortcut ? <Kbd className="ml-0.5" tone={variant === 'primary' ? 'on-accent' : 'plain'}>{shortcut}</Kbd> : null}
    </button>
  );
}
