import { inject } from '@angular/core';
import { type CanActivateFn, Router } from '@angular/router';
import { Auth } from './auth';

/** Lets signed-in users through; sends everyone else to sign-in, remembering where they were going. */
export const authGuard: CanActivateFn = async (_route, state) => {
  const auth = inject(Auth);
  const router = inject(Router);
  const session = await auth.load().catch(() => null);
  if (session) return true;
  return router.createUrlTree(['/sign-in'], { queryParams: { returnUrl: state.url } });
};
