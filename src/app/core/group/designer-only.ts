import { inject } from '@angular/core';
import { type CanActivateFn, Router } from '@angular/router';
import { Auth } from '../auth/auth';

/**
 * Keeps viewers and reviewers off the create pages (new model, new run): they
 * would only meet a 403 on saving. Sends them to the list of the same area. The
 * slug is read from the route being entered, since the current group follows the
 * URL only once the navigation has ended.
 */
export const designerOnly: CanActivateFn = (route, state) => {
  const slug = route.pathFromRoot.map((r) => r.paramMap.get('groupSlug')).find((s) => !!s);
  const role = inject(Auth)
    .groups()
    .find((g) => g.slug === slug)?.role;
  if (role === 'designer' || role === 'admin') return true;
  const area = state.url.split('?')[0].replace(/\/new$/, '');
  return inject(Router).parseUrl(area);
};
