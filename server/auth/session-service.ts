import type { Request, Response } from 'express';
import type { Db } from '../db/client.js';
import type { AuthUser } from './authenticate.js';
import { openSession } from './open-session.js';
import { sessionOf, type Session } from './session.js';

/** Browser sessions for the routes that sign someone in (sign-in, accepting an invitation). */
export class SessionService {
  constructor(
    private readonly db: Db,
    private readonly cookies: { jwtSecret: string; secureCookies: boolean },
  ) {}

  /** Opens a session and sets its cookies; answers its CSRF value. */
  open(req: Request, res: Response, userId: string): Promise<string> {
    return openSession(this.db, req, res, userId, this.cookies);
  }

  /** What the client keeps about the signed-in person. */
  describe(user: AuthUser, csrfToken: string): Promise<Session> {
    return sessionOf(this.db, user, csrfToken);
  }
}
