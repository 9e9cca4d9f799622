import { readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';

/*
 * WCAG 2.2 AA contrast of every token pair the client draws.
 *
 * Formula: WCAG 2.2, definitions "relative luminance" and "contrast ratio"
 * (https://www.w3.org/TR/WCAG22/#dfn-relative-luminance, #dfn-contrast-ratio):
 *   channel c = v/255; C = c ≤ 0.04045 ? c/12.92 : ((c+0.055)/1.055)^2.4
 *   L = 0.2126 R + 0.7152 G + 0.0722 B;   ratio = (L1 + 0.05) / (L2 + 0.05), L1 the lighter.
 * (WCAG 2.2 prints the threshold 0.04045; older editions printed 0.03928. No 8-bit value falls
 * between the two, so the result is the same.)
 * Thresholds: SC 1.4.3 Contrast (Minimum), 4.5:1 for text; SC 1.4.11 Non-text Contrast, 3:1 for
 * UI component boundaries, focus indicators and graphical objects (plot lines, marker shapes).
 */

const tokensPath = fileURLToPath(new URL('../../client/src/styles/tokens.css', import.meta.url));

type Palette = Map<string, string>;

/** Reads `--sf-name: #rrggbb;` lines of the block that starts with `selectorStart`. */
function readPalette(css: string, selectorStart: string): Palette {
  const start = css.indexOf(selectorStart);
  if (start < 0) throw new Error(`tokens.css: no block starting with ${selectorStart}`);
  const open = css.indexOf('{', start);
  const close = css.indexOf('}', open);
  const body = css.slice(open + 1, close);
  const palette: Palette = new Map();
  for (const match of body.matchAll(/--sf-([a-z0-9-]+):\s*(#[0-9a-fA-F]{6})\s*;/g)) {
    const [, name, hex] = match;
    if (name === undefined || hex === undefined) continue;
    palette.set(name, hex.toLowerCase());
  }
  return palette;
}

function channel(v: number): number {
  const c = v / 255;
  return c <= 0.04045 ? c / 12.92 : ((c + 0.055) / 1.055) ** 2.4;
}

function luminance(hex: string): number {
  const m = /^#([0-9a-f]{2})([0-9a-f]{2})([0-9a-f]{2})$/i.exec(hex);
  if (!m || m[1] === undefined || m[2] === undefined || m[3] === undefined) {
    throw new Error(`not a #rrggbb colour: ${hex}`);
  }
  const r = channel(parseInt(m[1], 16));
  const g = channel(parseInt(m[2], 16));
  const b = channel(parseInt(m[3], 16));
  return 0.2126 * r + 0.7152 * g + 0.0722 * b;
}

function contrast(a: string, b: string): number {
  const la = luminance(a);
  const lb = luminance(b);
  const [hi, lo] = la > lb ? [la, lb] : [lb, la];
  return (hi + 0.05) / (lo + 0.05);
}

const css = readFileSync(tokensPath, 'utf8');
const themes: Record<'dark' | 'light', Palette> = {
  dark: readPalette(css, ':root,'),
  light: readPalette(css, "[data-theme='light']"),
};

const TEXT = 4.5;
const UI = 3;

/** [foreground, background, minimum ratio, why]. */
const pairs: Array<[string, string, number, string]> = [];
const backgrounds = ['sunken', 'canvas', 'surface', 'raised'];
for (const bg of backgrounds) {
  pairs.push(['ink', bg, TEXT, 'body text']);
  pairs.push(['ink-muted', bg, TEXT, 'secondary text']);
  pairs.push(['accent-ink', bg, TEXT, 'links']);
  pairs.push(['danger', bg, TEXT, 'error text under a field']);
  pairs.push(['line-strong', bg, UI, 'input / checkbox boundary']);
  pairs.push(['focus', bg, UI, 'focus ring']);
  pairs.push(['accent', bg, UI, 'primary button boundary, switch on-state']);
  for (const f of ['flag-event', 'flag-eyes', 'flag-noise']) pairs.push([f, bg, UI, 'flag marker shape']);
  for (const s of ['new', 'review', 'labelled', 'dismissed', 'escalated', 'confirmed', 'returned']) {
    pairs.push([`state-${s}`, bg, UI, 'state marker shape']);
  }
}
pairs.push(['on-accent', 'accent', TEXT, 'primary button label']);
pairs.push(['on-accent', 'accent-hover', TEXT, 'primary button label, hover']);
pairs.push(['ink', 'accent-wash', TEXT, 'selected row / current nav item']);
pairs.push(['accent-ink', 'accent-wash', TEXT, 'current nav item label']);
for (const tone of ['danger', 'warn', 'ok', 'info']) {
  pairs.push([tone, `${tone}-wash`, TEXT, `${tone} badge / toast text`]);
  pairs.push(['ink', `${tone}-wash`, TEXT, `${tone} toast body`]);
}
pairs.push(['plot-axis', 'plot-bg', TEXT, 'plot axis labels']);
for (let i = 1; i <= 6; i += 1) pairs.push([`plot-${i}`, 'plot-bg', UI, 'plot series line']);

describe('contrast formula', () => {
  it('matches the values WCAG fixes by definition', () => {
    // WCAG 2.2 #dfn-contrast-ratio: ratios range from 1:1 to 21:1 (black on white).
    expect(contrast('#000000', '#ffffff')).toBeCloseTo(21, 10);
    expect(contrast('#777777', '#777777')).toBe(1);
    // White luminance is exactly 1, black 0 by the definition.
    expect(luminance('#ffffff')).toBeCloseTo(1, 12);
    expect(luminance('#000000')).toBe(0);
  });

  it('agrees with a worked grey value', () => {
    // #767676 on white is the lightest grey that passes 4.5:1 (widely quoted as
    // 4.54:1, e.g. by WebAIM's contrast checker; from memory). Worked by hand from the formula:
    // c = 118/255 = 0.46275, C = ((0.46275+0.055)/1.055)^2.4 = 0.18116; ratio = 1.05/0.23116 = 4.542.
    expect(contrast('#767676', '#ffffff')).toBeCloseTo(4.542, 3);
    expect(contrast('#777777', '#ffffff')).toBeLessThan(4.5);
  });
});

describe.each(['dark', 'light'] as const)('%s theme tokens', (theme) => {
  const palette = themes[theme];

  it('defines every token the other theme defines', () => {
    const other = themes[theme === 'dark' ? 'light' : 'dark'];
    expect([...palette.keys()].sort()).toEqual([...other.keys()].sort());
    expect(palette.size).toBeGreaterThan(40);
  });

  it.each(pairs)('%s on %s ≥ %d:1 (%s)', (fg, bg, min) => {
    const a = palette.get(fg);
    const b = palette.get(bg);
    if (a === undefined || b === undefined) throw new Error(`missing token ${a === undefined ? fg : bg}`);
    const ratio = contrast(a, b);
    expect(ratio, `${theme}: ${fg} ${a} on ${bg} ${b} is ${ratio.toFixed(2)}:1`).toBeGreaterThanOrEqual(min);
  });

  it('keeps the three flag hues apart from each other', () => {
    // Shape and text carry the flag too; this only guards against two flags collapsing into one hue.
    const f = ['flag-event', 'flag-eyes', 'flag-noise'].map((n) => palette.get(n));
    expect(new Set(f).size).toBe(3);
  });
});
