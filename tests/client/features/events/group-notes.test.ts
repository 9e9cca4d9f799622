import { describe, expect, it } from 'vitest';
import { groupChannelNotes } from '@client/features/events/lib/group-notes';

describe('groupChannelNotes', () => {
  it('says a message shared by several channels once, with the channels, and keeps other notes in place', () => {
    const notes = [
      'Depth fixed at 5 km: not resolved by the picks.',
      'XX.KS01.00.HHN: the registry holds one stage',
      'XX.KS01.00.HHE: the registry holds one stage',
      'XX.KS02.00.HHN: no response',
      'XX.KS02.00.HHE: the registry holds one stage',
    ];
    expect(groupChannelNotes(notes)).toEqual([
      'Depth fixed at 5 km: not resolved by the picks.',
      'The registry holds one stage — 3 channels: XX.KS01.00.HHN, XX.KS01.00.HHE, XX.KS02.00.HHE',
      'XX.KS02.00.HHN: no response',
    ]);
  });

  it('leaves a list without channel notes as it is', () => {
    expect(groupChannelNotes(['a', 'b: c'])).toEqual(['a', 'b: c']);
    expect(groupChannelNotes([])).toEqual([]);
  });
});
