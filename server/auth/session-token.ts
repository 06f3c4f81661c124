import jwt from 'jsonwebtoken';

/** Sessions last 12 hours; the cookie's Max-Age matches. */
export const sessionLifetimeSeconds = 12 * 60 * 60;

export function signSessionToken(userId: string, secret: string, lifetimeSeconds = sessionLifetimeSeconds): string {
  return jwt.sign({}, secret, { subject: userId, expiresIn: lifetimeSeconds, algorithm: 'HS256' });
}

export interface SessionClaims {
  userId: string;
  /** Issue time, seconds since the epoch. */
  issuedAt: number;
}

/** Null for a tampered, expired or malformed token; the caller answers 401. Only HS256 is accepted. */
export function verifySessionToken(token: string, secret: string): SessionClaims | null {
  try {
    const claims = jwt.verify(token, secret, { algorithms: ['HS256'] });
    if (typeof claims === 'string' || typeof claims.sub !== 'string' || typeof claims.iat !== 'number') return null;
    return { userId: claims.sub, issuedAt: claims.iat };
  } catch {
    return null;
  }
}
