import { describe, expect, it } from 'vitest';
import { compareChannels, componentRank, sortChannels } from '@shared/channel-order';

/*
 * The one channel order: the component is the last letter of a SEED channel code (SEED Manual
 * v2.4, Appendix A: Z vertical, N/E north/east, 1/2 orthogonal horizontals); Z before N before E
 * is common practice. Expected orders written out by hand.
 */
describe('channel order', () => {
  it('ranks Z, then N/1, then E/2, then other components', () => {
    expect(['HHZ', 'HHN', 'HH1', 'HHE', 'HH2', 'HDF', 'hhz'].map(componentRank)).toEqual([0, 1, 1, 2, 2, 3, 0]);
  });

  it('orders one sensor Z, N, E whatever order it comes in (the station table came as E, N, Z; the spectra as Z, E, N)', () => {
    const ids = ['XX.KV01.00.HHE', 'XX.KV01.00.HHN', 'XX.KV01.00.HHZ'];
    const want = ['XX.KV01.00.HHZ', 'XX.KV01.00.HHN', 'XX.KV01.00.HHE'];
    expect(sortChannels(ids, (s) => s)).toEqual(want);
    expect(sortChannels(['XX.KV01.00.HHZ', 'XX.KV01.00.HHE', 'XX.KV01.00.HHN'], (s) => s)).toEqual(want);
  });

  it('keeps each sensor together, numbered horizontals in N/E places, others last', () => {
    const ids = ['XX.KV02.10.HH2', 'XX.KV02.00.HHE', 'XX.KV02.10.HHZ', 'XX.KV02.00.HDF', 'XX.KV02.00.HHZ', 'XX.KV02.10.HH1', 'XX.KV02.00.HHN'];
    expect(sortChannels(ids, (s) => s)).toEqual([
      'XX.KV02.00.HHZ',
      'XX.KV02.00.HHN',
      'XX.KV02.00.HHE',
      'XX.KV02.00.HDF',
      'XX.KV02.10.HHZ',
      'XX.KV02.10.HH1',
      'XX.KV02.10.HH2',
    ]);
  });

  it('two sensors at one location: each Z, N, E in turn (band/instrument code order)', () => {
    expect(sortChannels(['XX.KV03.00.HHN', 'XX.KV03.00.EHZ', 'XX.KV03.00.HHZ', 'XX.KV03.00.EHE', 'XX.KV03.00.EHN', 'XX.KV03.00.HHE'], (s) => s)).toEqual([
      'XX.KV03.00.EHZ',
      'XX.KV03.00.EHN',
      'XX.KV03.00.EHE',
      'XX.KV03.00.HHZ',
      'XX.KV03.00.HHN',
      'XX.KV03.00.HHE',
    ]);
  });

  it('sorts objects by the key given and leaves the input alone', () => {
    const rows = [{ id: 'HHE' }, { id: 'HHZ' }, { id: 'HHN' }];
    expect(sortChannels(rows, (r) => r.id).map((r) => r.id)).toEqual(['HHZ', 'HHN', 'HHE']);
    expect(rows.map((r) => r.id)).toEqual(['HHE', 'HHZ', 'HHN']);
    expect(compareChannels('HHZ', 'HHZ')).toBe(0);
  });
});
