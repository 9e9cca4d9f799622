import { createHash, randomBytes } from 'node:crypto';

/**
 * A new one-time link token: 32 random bytes (256 bits) from the OS CSPRNG, base64url without
 * padding (43 characters).
 */
export function generateOneTimeToken(): string {
  return randomBytes(32).toString('base64url');
}

/**
 * SHA-256 of a token, hex (64 characters). Only this is stored: a database leak gives no usable
 * link. A fast hash is enough because the token has 256 bits of entropy (common practice, OWASP
 * Forgot Password Cheat Sheet).
 */
export function hashOneTimeToken(token: string): string {
  return createHash('sha256').update(token, 'utf8').digest('hex');
}

/** A new random user id (lucia's user id column): 15 random bytes, base64url (20 characters). */
export function generateUserId(): string {
  return randomBytes(15).toString('base64url');
}
