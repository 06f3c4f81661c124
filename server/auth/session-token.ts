import jwt from 'jsonwebtoken';

/** Sessions last 12 hours; the cookie's Max-Age matches. */
export const sessionLifetimeSeconds = 12 * 60 * 60;

/**
 * The JWT carries the user id and `pwc`, the account's password_changed_at in ms:
 * a password reset moves it, which ends every session issued before (exact, unlike
 * comparing with the 1-second `iat`).
 */
export function signSessionToken(userId: string, passwordStamp: number, secret: string, lifetimeSeconds = sessionLifetimeSeconds): string {
  return jwt.sign({ pwc: passwordStamp }, secret, { subject: userId, expiresIn: lifetimeSeconds, algorithm: 'HS256' });
}

export interface SessionClaims {
  userId: string;
  passwordStamp: number;
}

/** Null for a tampered, expired or malformed token; the caller answers 401. Only HS256 is accepted. */
export function verifySessionToken(token: string, secret: string): SessionClaims | null {
  try {
    const claims = jwt.verify(token, secret, { algorithms: ['HS256'] });
    if (typeof claims === 'string' || typeof claims.sub !== 'string' || typeof claims.pwc !== 'number') return null;
    return { userId: claims.sub, passwordStamp: claims.pwc };
  } catch {
    return null;
  }
}
