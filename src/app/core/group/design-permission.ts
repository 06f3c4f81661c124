import { type Signal, computed, inject } from '@angular/core';
import { CurrentGroup } from './current-group';

/**
 * True when the signed-in user may create and change things in the current group
 * (designer or admin). Viewers and reviewers get no create/edit/launch/cancel
 * controls at all; the server enforces the same rule with a 403.
 */
export function injectCanDesign(): Signal<boolean> {
  const group = inject(CurrentGroup);
  return computed(() => {
    const role = group.group()?.role;
    return role === 'designer' || role === 'admin';
  });
}
