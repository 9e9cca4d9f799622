import { hash, verify } from '@node-rs/argon2';

/**
 * argon2id parameters: 19 MiB memory, 2 iterations, 1 lane — the OWASP Password Storage Cheat Sheet
 * minimum for argon2id (m=19456 KiB, t=2, p=1).
 */
export const argon2Options = { algorithm: 2 /* Argon2id */, memoryCost: 19456, timeCost: 2, parallelism: 1 } as const;

/** Minimum password length (characters). */
export const minPasswordLength = 12;

/** Hashes a password to a PHC string with argon2id. */
export function hashPassword(password: string): Promise<string> {
  return hash(password, argon2Options);
}

/** True when `password` matches the PHC string; false for a malformed hash. */
export async function verifyPassword(phc: string, password: string): Promise<boolean> {
  try {
    return await verify(phc, password);
  } catch {
    return false;
  }
}
