import { inject } from '@angular/core';
import { type CanActivateFn, Router } from '@angular/router';
import { Auth } from '../auth/auth';

/**
 * Lets the user into `/g/:groupSlug` only for groups they belong to. Others get the
 * same "not found" page as a mistyped address: a group's existence is not revealed.
 */
export const groupGuard: CanActivateFn = (route) => {
  const auth = inject(Auth);
  const slug = route.paramMap.get('groupSlug');
  if (auth.groups().some((g) => g.slug === slug)) return true;
  return inject(Router).createUrlTree(['/not-found']);
};
