import { createHash, randomBytes } from 'node:crypto';

/**
 * Random secrets handed out once (invitation and reset links, personal API tokens).
 * 32 random bytes = 256 bits, so a fast sha256 is enough for storage: there is nothing
 * to brute-force, unlike a password.
 */
export function newOpaqueToken(prefix = ''): string {
  return prefix + randomBytes(32).toString('base64url');
}

export function hashOpaqueToken(token: string): string {
  return createHash('sha256').update(token, 'utf8').digest('hex');
}

/** Prefix of personal API tokens, so a leaked one is recognisable in logs and scanners. */
export const apiTokenPrefix = 'pwt_';
