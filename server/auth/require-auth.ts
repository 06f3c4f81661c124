import type { RequestHandler } from 'express';
import { signedInUser } from './authenticate.js';
import { checkCsrf } from './csrf.js';

/** Guards routes that need a signed-in user: 401 when nobody is, 403 csrf_failed on a forged cookie request. */
export const requireAuth: RequestHandler = (req, _res, next) => {
  signedInUser(req);
  checkCsrf(req);
  next();
};
