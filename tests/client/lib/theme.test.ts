import { readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import {
  parseThemeChoice,
  readThemeChoice,
  resolveTheme,
  themeStorageKey,
  writeThemeChoice,
  type ThemeStorage,
} from '@client/lib/theme';

/*
 * The theme rule (issue 10): a remembered choice wins; otherwise follow prefers-color-scheme
 * (Media Queries Level 5, https://www.w3.org/TR/mediaqueries-5/#prefers-color-scheme); dark when
 * the system states no preference for light.
 */

function memoryStorage(initial: Record<string, string> = {}): ThemeStorage & { data: Map<string, string> } {
  const data = new Map(Object.entries(initial));
  return {
    data,
    getItem: (k) => data.get(k) ?? null,
    setItem: (k, v) => void data.set(k, v),
    removeItem: (k) => void data.delete(k),
  };
}

const throwingStorage: ThemeStorage = {
  getItem: () => {
    throw new Error('blocked');
  },
  setItem: () => {
    throw new Error('blocked');
  },
  removeItem: () => {
    throw new Error('blocked');
  },
};

describe('theme choice', () => {
  it('reads only dark and light as a stored choice', () => {
    expect(parseThemeChoice('dark')).toBe('dark');
    expect(parseThemeChoice('light')).toBe('light');
    for (const junk of [null, undefined, '', 'Dark', 'system', 'blue', 1, {}]) expect(parseThemeChoice(junk)).toBe('system');
  });

  it('resolves system to the media preference, dark by default', () => {
    expect(resolveTheme('system', true)).toBe('light');
    expect(resolveTheme('system', false)).toBe('dark');
    expect(resolveTheme('dark', true)).toBe('dark');
    expect(resolveTheme('light', false)).toBe('light');
  });

  it('remembers a choice and forgets it for system', () => {
    const storage = memoryStorage();
    writeThemeChoice(storage, 'light');
    expect(storage.data.get(themeStorageKey)).toBe('light');
    expect(readThemeChoice(storage)).toBe('light');
    writeThemeChoice(storage, 'system');
    expect(storage.data.has(themeStorageKey)).toBe(false);
    expect(readThemeChoice(storage)).toBe('system');
  });

  it('treats blocked storage as no choice, without throwing', () => {
    expect(readThemeChoice(throwingStorage)).toBe('system');
    expect(() => writeThemeChoice(throwingStorage, 'dark')).not.toThrow();
  });
});

describe('inline theme script in client/index.html', () => {
  const html = readFileSync(fileURLToPath(new URL('../../../client/index.html', import.meta.url)), 'utf8');
  const script = /<script>([\s\S]*?)<\/script>/.exec(html)?.[1];

  /**
   * Runs the inline script against a fake window/document and returns the attribute it set.
   * `stored` is what localStorage holds; the word 'throw' makes reading it throw instead.
   */
  function runInline(stored: string | null, prefersLight: boolean): string | undefined {
    if (script === undefined) throw new Error('client/index.html has no inline <script>');
    const attributes = new Map<string, string>();
    const fakeWindow = {
      localStorage: {
        getItem: (key: string) => {
          if (stored === 'throw') throw new Error('blocked');
          return key === themeStorageKey ? stored : null;
        },
      },
      matchMedia: (query: string) => ({ matches: query === '(prefers-color-scheme: light)' && prefersLight }),
    };
    const fakeDocument = { documentElement: { setAttribute: (k: string, v: string) => void attributes.set(k, v) } };
    new Function('window', 'document', script)(fakeWindow, fakeDocument);
    return attributes.get('data-theme');
  }

  it('uses the same storage key as theme.ts', () => {
    expect(script).toContain(`'${themeStorageKey}'`);
  });

  it.each([
    [null, false],
    [null, true],
    ['dark', true],
    ['light', false],
    ['garbage', true],
    ['garbage', false],
    ['throw', true],
  ] as const)('stored %s, system prefers light %s: same result as resolveTheme', (stored, prefersLight) => {
    const expected =
      stored === 'throw'
        ? 'dark' // storage blocked before the media query is read: the dark default stands
        : resolveTheme(readThemeChoice(memoryStorage(stored === null ? {} : { [themeStorageKey]: stored })), prefersLight);
    expect(runInline(stored, prefersLight)).toBe(expected);
  });
});
