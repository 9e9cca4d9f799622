import { describe, expect, it } from 'vitest';
import { escalationSubject, itemLink } from '@server/features/supervision/escalations';

describe('escalation e-mail parts', () => {
  it('puts stream, window time and flag in the subject', () => {
    expect(escalationSubject('XX.KV03.00.HHZ', '2026-03-14T09:26:53.589Z', 'likely event')).toBe('Escalated: XX.KV03.00.HHZ 2026-03-14T09:26:53.589Z (likely event)');
  });
  it('links to the item under the public URL, with or without a trailing slash', () => {
    expect(itemLink('https://seisift.example', 42)).toBe('https://seisift.example/queue/items/42');
    expect(itemLink('https://seisift.example/net/', 42)).toBe('https://seisift.example/net/queue/items/42');
  });
});
