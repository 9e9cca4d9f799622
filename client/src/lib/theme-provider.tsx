import { createContext, useCallback, useContext, useEffect, useMemo, useState, type ReactNode } from 'react';
import { readThemeChoice, resolveTheme, themeStorageKey, writeThemeChoice, type Theme, type ThemeChoice } from './theme';

/** What the theme context offers. */
export type ThemeContextValue = {
  /** The user's choice ('system' until they switch). */
  choice: ThemeChoice;
  /** The palette shown now. */
  theme: Theme;
  /** Switches and remembers. */
  setChoice: (choice: ThemeChoice) => void;
};

const ThemeContext = createContext<ThemeContextValue | null>(null);

const lightQuery = '(prefers-color-scheme: light)';

function systemPrefersLight(): boolean {
  return typeof window.matchMedia === 'function' && window.matchMedia(lightQuery).matches;
}

/**
 * Holds the theme for the whole app and writes it to `<html data-theme>`. Follows system changes
 * while the choice is 'system', and choices made in another tab of the same browser.
 */
export function ThemeProvider({ children }: { children: ReactNode }) {
  const [choice, setChoiceState] = useState<ThemeChoice>(() => readThemeChoice(window.localStorage));
  const [prefersLight, setPrefersLight] = useState<boolean>(systemPrefersLight);

  useEffect(() => {
    if (typeof window.matchMedia !== 'function') return;
    const query = window.matchMedia(lightQuery);
    const onChange = (event: MediaQueryListEvent) => setPrefersLight(event.matches);
    query.addEventListener('change', onChange);
    return () => query.removeEventListener('change', onChange);
  }, []);

  useEffect(() => {
    const onStorage = (event: StorageEvent) => {
      if (event.key === themeStorageKey || event.key === null) setChoiceState(readThemeChoice(window.localStorage));
    };
    window.addEventListener('storage', onStorage);
    return () => window.removeEventListener('storage', onStorage);
  }, []);

  const theme = resolveTheme(choice, prefersLight);

  useEffect(() => {
    document.documentElement.setAttribute('data-theme', theme);
  }, [theme]);

  const setChoice = useCallback((next: ThemeChoice) => {
    writeThemeChoice(window.localStorage, next);
    setChoiceState(next);
  }, []);

  const value = useMemo(() => ({ choice, theme, setChoice }), [choice, theme, setChoice]);
  return <ThemeContext.Provider value={value}>{children}</ThemeContext.Provider>;
}

/** The theme context; throws when used outside <ThemeProvider>, which is a wiring mistake. */
export function useTheme(): ThemeContextValue {
  const value = useContext(ThemeContext);
  if (!value) throw new Error('useTheme() needs a <ThemeProvider> above it (see client/src/app/provider.tsx)');
  return value;
}
