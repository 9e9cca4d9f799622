/**
 * Theme rules shared by the inline script in client/index.html and the React theme provider.
 * A remembered choice ('dark' | 'light') wins; 'system' follows `prefers-color-scheme`; with no
 * system preference the dark theme is the default (Seisift is used in dim operations rooms).
 */

/** localStorage key holding the user's theme choice. client/index.html repeats this literal. */
export const themeStorageKey = 'seisift.theme';

/** The two palettes in client/src/styles/tokens.css. */
export const themes = ['dark', 'light'] as const;

/** One palette name. */
export type Theme = (typeof themes)[number];

/** What the user picked: a palette, or follow the system. */
export type ThemeChoice = Theme | 'system';

/** Every choice in the order the theme switch shows them. */
export const themeChoices: readonly ThemeChoice[] = ['system', 'dark', 'light'];

/** Words shown for each choice. */
export const themeChoiceLabels: Record<ThemeChoice, string> = {
  system: 'Auto',
  dark: 'Dark',
  light: 'Light',
};

/**
 * Reads a stored value; anything but 'dark' or 'light' (missing, old, tampered) means 'system'.
 * @param raw the value from storage, of unknown shape
 */
export function parseThemeChoice(raw: unknown): ThemeChoice {
  return raw === 'dark' || raw === 'light' ? raw : 'system';
}

/**
 * The palette to show for a choice.
 * @param choice the user's choice
 * @param systemPrefersLight whether `(prefers-color-scheme: light)` matches
 */
export function resolveTheme(choice: ThemeChoice, systemPrefersLight: boolean): Theme {
  if (choice !== 'system') return choice;
  return systemPrefersLight ? 'light' : 'dark';
}

/** The subset of the Storage interface the theme needs (lets tests pass a Map-backed fake). */
export type ThemeStorage = Pick<Storage, 'getItem' | 'setItem' | 'removeItem'>;

/**
 * Reads the remembered choice; storage that throws (privacy modes) reads as 'system'.
 * @param storage usually window.localStorage
 */
export function readThemeChoice(storage: ThemeStorage): ThemeChoice {
  try {
    return parseThemeChoice(storage.getItem(themeStorageKey));
  } catch {
    return 'system';
  }
}

/**
 * Remembers a choice; 'system' forgets the stored value so the system preference rules again.
 * Storage that throws is ignored: the choice then lasts for this page only.
 * @param storage usually window.localStorage
 * @param choice the user's choice
 */
export function writeThemeChoice(storage: ThemeStorage, choice: ThemeChoice): void {
  try {
    if (choice === 'system') storage.removeItem(themeStorageKey);
    else storage.setItem(themeStorageKey, choice);
  } catch {
    /* not remembered, still applied */
  }
}
