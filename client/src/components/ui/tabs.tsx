import { useId, useRef, useState, type KeyboardEvent, type ReactNode } from 'react';
import { cx } from '@client/lib/cx';

/** One tab. */
export type TabItem = { id: string; label: ReactNode; content: ReactNode };

/** Props of <Tabs>. Uncontrolled with `defaultTab`, or controlled with `value` + `onChange`. */
export type TabsProps = {
  label: string;
  tabs: TabItem[];
  defaultTab?: string;
  value?: string;
  onChange?: (id: string) => void;
  className?: string;
};

/**
 * Tabs per the WAI-ARIA Authoring Practices tabs pattern: one tab stop (roving tabindex), Left/Right
 * move and select, Home/End jump to the ends. The current tab is underlined and bold, not only tinted.
 */
export function Tabs({ label, tabs, defaultTab, value, onChange, className }: TabsProps) {
  const baseId = useId();
  const [own, setOwn] = useState<string | undefined>(defaultTab ?? tabs[0]?.id);
  const current = value ?? own;
  const refs = useRef(new Map<string, HTMLButtonElement>());

  const select = (id: string) => {
    if (value === undefined) setOwn(id);
    onChange?.(id);
    refs.current.get(id)?.focus();
  };

  const onKeyDown = (event: KeyboardEvent<HTMLDivElement>) => {
    const index = tabs.findIndex((t) => t.id === current);
    if (index < 0) return;
    let next: number | null = null;
    if (event.key === 'ArrowRight') next = (index + 1) % tabs.length;
    else if (event.key === 'ArrowLeft') next = (index - 1 + tabs.length) % tabs.length;
    else if (event.key === 'Home') next = 0;
    else if (event.key === 'End') next = tabs.length - 1;
    if (next === null) return;
    event.preventDefault();
    const tab = tabs[next];
    if (tab) select(tab.id);
  };

  return (
    <div className={className}>
      <div role="tablist" aria-label={label} onKeyDown={onKeyDown} className="flex gap-1 border-b border-line">
        {tabs.map((tab) => {
          const selected = tab.id === current;
          return (
            <button
              key={tab.id}
              ref={(el) => {
                if (el) refs.current.set(tab.id, el);
                else refs.current.delete(tab.id);
              }}
              type="button"
              role="tab"
              id={`${baseId}-tab-${tab.id}`}
              aria-selected={selected}
              aria-controls={`${baseId}-panel-${tab.id}`}
              tabIndex={selected ? 0 : -1}
              onClick={() => select(tab.id)}
              className={cx(
                '-mb-px h-8 border-b-2 px-3 text-base',
                selected ? 'border-accent font-semibold text-ink' : 'border-transparent text-ink-muted hover:text-ink',
              )}
            >
              {tab.label}
            </button>
          );
        })}
      </div>
      {tabs.map((tab) => (
        <div
          key={tab.id}
          role="tabpanel"
          id={`${baseId}-panel-${tab.id}`}
          aria-labelledby={`${baseId}-tab-${tab.id}`}
          hidden={tab.id !== current}
          tabIndex={0}
          className="pt-3"
        >
          {tab.content}
        </div>
      ))}
    </div>
  );
}
