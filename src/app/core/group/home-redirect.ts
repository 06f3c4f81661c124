import { inject } from '@angular/core';
import { type CanActivateFn, Router } from '@angular/router';
import { Auth } from '../auth/auth';

/** `/` leads to the dashboard of the user's first group, or to a page saying there is none. */
export const homeRedirect: CanActivateFn = () => {
  const auth = inject(Auth);
  const router = inject(Router);
  const first = auth.groups()[0];
  return first ? router.createUrlTree(['/g', first.slug, 'dashboard']) : router.createUrlTree(['/no-group']);
};
