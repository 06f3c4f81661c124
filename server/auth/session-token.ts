import { createSecretKey, type KeyObject } from 'node:crypto';
import jwt from 'jsonwebtoken';

/**
 * The HMAC key object of each secret, made once: given the secret as a string,
 * jsonwebtoken first tries to parse it as a public key (createPublicKey, which throws)
 * and then makes a secret key, on every sign and verify. An installation has one or two
 * secrets (tests make a few), so the map stays tiny.
 */
const keys = new Map<string, KeyObject>();

function hmacKey(secret: string): KeyObject {
  let key = keys.get(secret);
  if (!key) {
    key = createSecretKey(Buffer.from(secret, 'utf8'));
    keys.set(secret, key);
  }
  return key;
}

/** Sessions last 12 hours; the cookie's Max-Age and the session row's expiry match. */
export const sessionLifetimeSeconds = 12 * 60 * 60;

/**
 * The JWT carries the user id (`sub`) and the session row's id (`jti`): the row decides
 * whether the session still holds (sign-out and password resets revoke it).
 */
export function signSessionToken(userId: string, sessionId: string, secret: string, lifetimeSeconds = sessionLifetimeSeconds): string {
  return jwt.sign({}, hmacKey(secret), { subject: userId, jwtid: sessionId, expiresIn: lifetimeSeconds, algorithm: 'HS256' });
}

interface SessionClaims {
  userId: string;
  sessionId: string;
}

/**
 * Null for a tampered, expired or malformed token; the caller answers 401. Only HS256
 * is accepted, and a token without an expiry or a session id is refused: jsonwebtoken
 * would accept one without `exp` for ever.
 */
export function verifySessionToken(token: string, secret: string): SessionClaims | null {
  try {
    const claims = jwt.verify(token, hmacKey(secret), { algorithms: ['HS256'] });
    if (typeof claims === 'string' || typeof claims.sub !== 'string' || typeof claims.jti !== 'string') return null;
    if (typeof claims.exp !== 'number') return null;
    return { userId: claims.sub, sessionId: claims.jti };
  } catch {
    return null;
  }
}
