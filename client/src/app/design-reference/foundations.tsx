import { useEffect, useRef, useState } from 'react';
import { cx } from '@client/lib/cx';

const swatchTokens = [
  'canvas',
  'surface',
  'raised',
  'sunken',
  'line',
  'line-strong',
  'ink',
  'ink-muted',
  'accent',
  'accent-ink',
  'focus',
  'danger',
  'warn',
  'ok',
  'info',
] as const;

/** The colour tokens of client/src/styles/tokens.css with the value each resolves to in this theme. */
export function Swatches() {
  const ref = useRef<HTMLUListElement>(null);
  const [hex, setHex] = useState<Record<string, string>>({});
  useEffect(() => {
    if (!ref.current) return;
    const style = getComputedStyle(ref.current);
    setHex(Object.fromEntries(swatchTokens.map((t) => [t, style.getPropertyValue(`--sf-${t}`).trim()])));
  }, []);
  return (
    <ul ref={ref} className="grid grid-cols-[repeat(auto-fill,minmax(7.5rem,1fr))] gap-1.5">
      {swatchTokens.map((t) => (
        <li key={t} className="flex items-center gap-2">
          <span className="size-5 shrink-0 rounded-xs border border-line-strong" style={{ background: `var(--sf-${t})` }} aria-hidden="true" />
          <span className="min-w-0 leading-tight">
            <span className="block truncate text-sm">{t}</span>
            <code className="block text-xs text-ink-muted">{hex[t] ?? ''}</code>
          </span>
        </li>
      ))}
    </ul>
  );
}

/** The type scale: headings, dense prose, secondary text and monospaced figures. */
export function TypePreview() {
  return (
    <div className="flex flex-col gap-1">
      <p className="text-xl font-semibold">Queue · 42 waiting</p>
      <p className="text-md">Dense prose at 14 px in IBM Plex Sans; labels at 13 px; nothing under 12 px.</p>
      <p className="text-sm text-ink-muted">Secondary text, e.g. “claimed 3 min ago by the duty analyst”.</p>
      <p className="flex flex-wrap gap-x-4 text-sm">
        <code>XX.KV03.00.HHZ</code>
        <time dateTime="2026-03-14T09:26:53.589Z">2026-03-14T09:26:53.589Z</time>
        <span className="figure">14.20 · 1.152 · 0.5–2 Hz</span>
      </p>
    </div>
  );
}

const spacingSteps = [1, 2, 3, 4, 6, 8] as const;
const radii = [
  ['xs', 'rounded-xs', '2 px'],
  ['sm', 'rounded-sm', '3 px'],
  ['md', 'rounded-md', '5 px'],
  ['lg', 'rounded-lg', '8 px'],
  ['full', 'rounded-full', 'pills'],
] as const;

/** The spacing steps and the corner radii. */
export function SpacingPreview() {
  return (
    <div className="flex flex-col gap-3">
      <ul className="flex flex-wrap items-end gap-3" aria-label="Spacing steps">
        {spacingSteps.map((step) => (
          <li key={step} className="flex flex-col items-center gap-1">
            <span aria-hidden="true" className="block bg-accent" style={{ width: `calc(var(--spacing) * ${step})`, height: `calc(var(--spacing) * ${step})` }} />
            <code className="text-xs text-ink-muted">
              {step} · {step * 4} px
            </code>
          </li>
        ))}
      </ul>
      <ul className="flex flex-wrap gap-3" aria-label="Radii">
        {radii.map(([name, cls, size]) => (
          <li key={name} className="flex flex-col items-center gap-1">
            <span aria-hidden="true" className={cx('block h-7 w-12 border-[1.5px] border-line-strong bg-raised', cls)} />
            <code className="text-xs text-ink-muted">
              {name} · {size}
            </code>
          </li>
        ))}
      </ul>
    </div>
  );
}
