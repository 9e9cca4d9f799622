/**
 * Password hashing against the OWASP Password Storage Cheat Sheet minimum for argon2id
 * (m = 19 MiB, t = 2, p = 1), read back from the PHC string the hash carries.
 */
import { describe, expect, it } from 'vitest';
import { passwordMinLength } from '@shared/auth/schemas';
import { hashPassword, minPasswordLength, verifyPassword } from '@server/auth/password';
import { generateOneTimeToken, hashOneTimeToken } from '@server/auth/tokens';

describe('passwords and one-time tokens', () => {
  it('hashes with argon2id at m=19456 KiB, t=2, p=1 and verifies', async () => {
    const phc = await hashPassword('kestrel-demo-pass');
    expect(phc).toMatch(/^\$argon2id\$v=19\$m=19456,t=2,p=1\$/);
    expect(await verifyPassword(phc, 'kestrel-demo-pass')).toBe(true);
    expect(await verifyPassword(phc, 'kestrel-demo-pasS')).toBe(false);
    expect(await verifyPassword('not a phc string', 'x')).toBe(false);
  });

  it('client and server agree on the minimum length (12)', () => {
    expect(passwordMinLength).toBe(minPasswordLength);
    expect(minPasswordLength).toBe(12);
  });

  it('tokens are 256-bit base64url and stored as SHA-256 hex (FIPS 180-4 test vector "abc")', () => {
    const a = generateOneTimeToken();
    expect(a).toMatch(/^[A-Za-z0-9_-]{43}$/);
    expect(Buffer.from(a, 'base64url')).toHaveLength(32);
    expect(generateOneTimeToken()).not.toBe(a);
    expect(hashOneTimeToken('abc')).toBe('ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad');
  });
});
