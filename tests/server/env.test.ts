import { describe, expect, it } from 'vitest';
import { ConfigError, loadEnv } from '@server/env';

describe('loadEnv', () => {
  it('applies the defaults (port 3000, private MariaDB on 3407, not 3306)', () => {
    const env = loadEnv({});
    expect(env.PORT).toBe(3000);
    expect(env.SEISIFT_DB_PORT).toBe(3407);
    expect(env.SEISIFT_MAX_UPLOAD_BYTES).toBe(25 * 1024 * 1024);
  });

  it('names the variable and the value when PORT is not a number', () => {
    expect(() => loadEnv({ PORT: 'abc' })).toThrow(ConfigError);
    expect(() => loadEnv({ PORT: 'abc' })).toThrow('PORT: must be a whole number from 1 to 65535 (got "abc")');
  });

  it('refuses a port out of range and a bad DATABASE_URL', () => {
    expect(() => loadEnv({ SEISIFT_DB_PORT: '70000' })).toThrow(/^SEISIFT_DB_PORT:/);
    expect(() => loadEnv({ DATABASE_URL: 'postgres://x' })).toThrow(/^DATABASE_URL: must start with mysql:\/\//);
  });

  it('reads TRUST_PROXY as the list Express trusts (default none) and refuses what is not an address, range or range name', () => {
    expect(loadEnv({}).TRUST_PROXY).toEqual([]);
    expect(loadEnv({ TRUST_PROXY: 'none' }).TRUST_PROXY).toEqual([]);
    expect(loadEnv({ TRUST_PROXY: 'loopback, 10.0.0.0/8,fd00::1' }).TRUST_PROXY).toEqual(['loopback', '10.0.0.0/8', 'fd00::1']);
    expect(() => loadEnv({ TRUST_PROXY: 'true' })).toThrow(/^TRUST_PROXY: must be "none" or comma-separated/);
    expect(() => loadEnv({ TRUST_PROXY: '10.0.0.0/33' })).toThrow(/^TRUST_PROXY:/);
    expect(() => loadEnv({ TRUST_PROXY: '*' })).toThrow(/^TRUST_PROXY:/);
  });
});
