import type { RequestHandler } from 'express';
import { ApiError } from '../http/error-handler.js';
import { signedInUser } from './authenticate.js';
import { checkCsrf } from './csrf.js';

/** What anyone but the site operator hears about the outbox: it does not exist. */
export function outboxHidden(): ApiError {
  return new ApiError(404, 'not_found', 'There is no outbox: mail goes to a real provider, or you are not the site operator.');
}

/** Routes only the site operator may call (see site-operator.ts): 401 for nobody, 404 for everyone else. */
export const requireOperator: RequestHandler = (req, _res, next) => {
  const user = signedInUser(req);
  if (!user.siteOperator) throw outboxHidden();
  checkCsrf(req);
  next();
};
