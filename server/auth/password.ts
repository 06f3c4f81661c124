import { threadPasswordHasher, type PasswordHasher } from './password-hasher.js';

/**
 * bcrypt work factor 10 (2^10 rounds): the OWASP password-storage cheat sheet's minimum.
 * Measured with bcryptjs on this 2-core machine: cost 10 ≈ 206 ms, 11 ≈ 369 ms, 12 ≈ 774 ms
 * per hash; 12 would make every sign-in take most of a second. Tests pass 4 for speed.
 */
export const defaultPasswordCost = 10;

/** Hashes in a worker thread (password-hasher.ts), so the caller's event loop stays free. */
export function hashPassword(password: string, cost = defaultPasswordCost, hasher: PasswordHasher = threadPasswordHasher): Promise<string> {
  return hasher.hash(password, cost);
}

export function verifyPassword(password: string, hash: string, hasher: PasswordHasher = threadPasswordHasher): Promise<boolean> {
  return hasher.verify(password, hash);
}

/**
 * A hash of a random password, compared against when the e-mail is unknown so a wrong
 * e-mail takes as long as a wrong password (no account enumeration by timing).
 */
const dummyHashes = new Map<number, Promise<string>>();
export function dummyPasswordHash(cost = defaultPasswordCost, hasher: PasswordHasher = threadPasswordHasher): Promise<string> {
  let hash = dummyHashes.get(cost);
  if (!hash) {
    hash = hasher.hash(crypto.randomUUID(), cost);
    dummyHashes.set(cost, hash);
  }
  return hash;
}
