import jwt from 'jsonwebtoken';
import { describe, expect, it } from 'vitest';
import { signSessionToken, verifySessionToken } from '../../server/auth/session-token';

// The key object of a secret is made once and reused (server/auth/session-token.ts);
// these checks pin that the cached key signs and verifies exactly as the plain string did.
describe('session tokens with a cached HMAC key', () => {
  const secret = 'a-test-secret-of-reasonable-length-0123456789';

  it('verify what they sign, again and again with the same key', () => {
    for (let k = 0; k < 3; k++) {
      const token = signSessionToken(`user-${k}`, `session-${k}`, secret);
      expect(verifySessionToken(token, secret)).toEqual({ userId: `user-${k}`, sessionId: `session-${k}` });
    }
  });

  it('accept a token signed with the secret as a plain string (cookies issued before the cache)', () => {
    const token = jwt.sign({}, secret, { subject: 'u1', jwtid: 's1', expiresIn: 60, algorithm: 'HS256' });
    expect(verifySessionToken(token, secret)).toEqual({ userId: 'u1', sessionId: 's1' });
  });

  it('refuse another secret, a tampered token, an expired one and one without expiry', () => {
    const token = signSessionToken('u1', 's1', secret);
    expect(verifySessionToken(token, `${secret}x`)).toBeNull();
    const [head, body, sig] = token.split('.');
    const forged = Buffer.from(JSON.stringify({ ...JSON.parse(Buffer.from(body!, 'base64url').toString()), sub: 'u2' })).toString('base64url');
    expect(verifySessionToken(`${head}.${forged}.${sig}`, secret)).toBeNull();
    expect(verifySessionToken(signSessionToken('u1', 's1', secret, -10), secret)).toBeNull();
    const noExpiry = jwt.sign({}, secret, { subject: 'u1', jwtid: 's1', algorithm: 'HS256' });
    expect(verifySessionToken(noExpiry, secret)).toBeNull();
  });
});
