import { useId, type KeyboardEvent } from 'react';
import { useTheme } from '@client/lib/theme-provider';
import { themeChoiceLabels, themeChoices, type ThemeChoice } from '@client/lib/theme';
import { cx } from '@client/lib/cx';
import { AutoIcon, MoonIcon, SunIcon } from './icons';

const icons: Record<ThemeChoice, typeof SunIcon> = { system: AutoIcon, dark: MoonIcon, light: SunIcon };

/**
 * Theme choice as a small radio group (Auto / Dark / Light): one tab stop, arrow keys move, the
 * chosen option is filled and its word is always visible. The choice is remembered in localStorage.
 */
export function ThemeSwitch({ className }: { className?: string }) {
  const { choice, setChoice } = useTheme();
  const labelId = useId();
  const onKeyDown = (event: KeyboardEvent<HTMLDivElement>) => {
    const i = themeChoices.indexOf(choice);
    let next: number | null = null;
    if (event.key === 'ArrowRight' || event.key === 'ArrowDown') next = (i + 1) % themeChoices.length;
    if (event.key === 'ArrowLeft' || event.key === 'ArrowUp') next = (i - 1 + themeChoices.length) % themeChoices.length;
    const target = next === null ? undefined : themeChoices[next];
    if (target === undefined) return;
    event.preventDefault();
    setChoice(target);
    const button = event.currentTarget.querySelector<HTMLButtonElement>(`[data-choice="${target}"]`);
    button?.focus();
  };
  return (
    <div className={cx('inline-flex items-center gap-1.5', className)}>
      <span id={labelId} className="sr-only">
        Theme
      </span>
      <div role="radiogroup" aria-labelledby={labelId} onKeyDown={onKeyDown} className="inline-flex rounded-sm border border-line-strong p-px">
        {themeChoices.map((option) => {
          const Icon = icons[option];
          const checked = option === choice;
          return (
            <button
              key={option}
              type="button"
              role="radio"
              aria-checked={checked}
              tabIndex={checked ? 0 : -1}
              data-choice={option}
              onClick={() => setChoice(option)}
              className={cx(
                'inline-flex h-6 items-center gap-1 rounded-xs px-1.5 text-xs',
                checked ? 'bg-accent font-semibold text-on-accent' : 'text-ink-muted hover:text-ink',
              )}
            >
              <Icon size={12} />
              {themeChoiceLabels[option]}
            </button>
          );
        })}
      </div>
    </div>
  );
}
