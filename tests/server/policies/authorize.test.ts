/** The server wrapper of the policy module: 403 with words, station scope for lists. */
import { describe, expect, it } from 'vitest';
import { AppError } from '@server/errors';
import type { AuthUser } from '@server/auth/principal';
import { authorize, authorizedStations } from '@server/policies/authorize';

const operator: AuthUser = { id: 'op', email: 'operator@kestrel.example', displayName: 'Op', roles: ['operator'], stationIds: [1, 2] };
const analyst: AuthUser = { id: 'an', email: 'analyst@kestrel.example', displayName: 'An', roles: ['analyst'], stationIds: [] };

describe('authorize', () => {
  it('passes an operator on an assigned station and refuses another with 403 forbidden naming the action', () => {
    expect(() => authorize(operator, 'station.edit', { stationId: 2 })).not.toThrow();
    try {
      authorize(operator, 'station.edit', { stationId: 3 });
      expect.unreachable('must throw');
    } catch (err) {
      expect(err).toBeInstanceOf(AppError);
      expect(err).toMatchObject({ status: 403, code: 'forbidden', message: 'You may not edit this station' });
    }
  });

  it('gives list scopes: assigned ids for an operator, all for an analyst, 403 without any reach', () => {
    expect(authorizedStations(operator, 'queue.view')).toEqual([1, 2]);
    expect(authorizedStations(analyst, 'queue.view')).toBe('all');
    expect(() => authorizedStations(analyst, 'users.manage')).toThrow('You may not manage users');
  });
});
