import { renderToStaticMarkup } from 'react-dom/server';
import { describe, expect, it } from 'vitest';
import type { BaselineView } from '@shared/schemas/station';
import { BaselineSummary } from '@client/features/stations/components/baseline-summary';

/** Visible text of rendered markup (tags dropped, entities of the few characters used decoded, spaces collapsed). */
const text = (html: string) => html.replace(/<[^>]+>/g, ' ').replace(/&quot;/g, '"').replace(/&amp;/g, '&').replace(/\s+/g, ' ').trim();

// The score's fallback and floors as the server sends them (server/dsp/score.ts); test input.
const fixed = { networkDefault: { log10Ratio: { median: 0, mad: 0.3 }, staLtaPeak: { median: 2, mad: 0.5 } }, madFloor: { log10Ratio: 0.05, staLtaPeak: 0.1 } };

describe('BaselineSummary', () => {
  it('with one noise window: says the network default is in use, shows its figures, and no MAD of 0.000 for the one window', () => {
    const one: BaselineView = { count: 1, source: 'flagged', log10Ratio: { median: 0.412, mad: 0 }, staLtaPeak: { median: 1.9, mad: 0 }, minWindows: 20, inUse: false, ...fixed };
    const html = renderToStaticMarkup(<BaselineSummary baseline={one} />);
    const t = text(html);
    expect(html).toContain('data-in-use="network default"');
    expect(t).toContain('network default in use');
    expect(t).toContain('This station has 1 of the 20 noise windows it needs');
    expect(t).toContain('in use: network default');
    // The figures in use are the default's (0.000 / 0.300, 2.000 / 0.500), the station's one window beside them, not used.
    expect(t).toMatch(/log10 high\/low ratio 0\.000 0\.300 0\.412 —/);
    expect(t).toMatch(/STA\/LTA peak 2\.000 0\.500 1\.900 —/);
    expect(t).toContain('this station so far (not used)');
    expect(t).not.toContain('0.000 (score uses');
    expect(t).toContain('One window has no spread');
  });

  it('with none: the network default alone', () => {
    const none: BaselineView = { count: 0, source: 'none', log10Ratio: null, staLtaPeak: null, minWindows: 20, inUse: false, ...fixed };
    const t = text(renderToStaticMarkup(<BaselineSummary baseline={none} />));
    expect(t).toContain('No noise windows from this station yet; the score compares with the network default until there are 20.');
    expect(t).not.toContain('so far');
  });

  it('in use: the station’s figures, a MAD under the floor shown with the floor the score uses', () => {
    const own: BaselineView = { count: 25, source: 'dismissed', log10Ratio: { median: -0.21, mad: 0.02 }, staLtaPeak: { median: 1.8, mad: 0.3 }, minWindows: 20, inUse: true, ...fixed };
    const html = renderToStaticMarkup(<BaselineSummary baseline={own} />);
    const t = text(html);
    expect(html).toContain('data-in-use="station"');
    expect(t).toContain('station baseline in use');
    expect(t).toContain('From this station’s last 25 windows an analyst dismissed as noise.');
    expect(t).toMatch(/log10 high\/low ratio −0\.210 0\.020 \(score uses 0\.050\)/);
    expect(t).toMatch(/STA\/LTA peak 1\.800 0\.300/);
    expect(t).not.toContain('network default in use');
  });
});
