import { inject } from '@angular/core';
import { type CanActivateFn, Router } from '@angular/router';
import { Auth } from './auth';

/** Lets signed-in users through; sends everyone else to sign-in, remembering where they were going. */
export const authGuard: CanActivateFn = async (_route, state) => {
  const auth = inject(Auth);
  const router = inject(Router);
  const session = await auth.load().catch(() => null);
  if (session) return true;
  // "/" is where sign-in leads anyway; only a deeper address is worth carrying along.
  const queryParams = state.url === '/' ? {} : { returnUrl: state.url };
  return router.createUrlTree(['/sign-in'], { queryParams });
};
