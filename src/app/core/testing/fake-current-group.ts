import { computed, signal } from '@angular/core';
import type { Role } from '../../../../shared/api/enums';
import { CurrentGroup } from '../group/current-group';

/**
 * A CurrentGroup provider for specs: a fixed group with the given role, so the
 * feature pages can be rendered without a signed-in session or a router URL.
 */
export function provideFakeCurrentGroup(role: Role, id = 'g1', slug = 'lab') {
  const group = signal({ id, slug, name: 'Lab', role });
  return {
    provide: CurrentGroup,
    useValue: {
      group,
      id: computed(() => group().id),
      slug: computed(() => group().slug),
      isAdmin: computed(() => group().role === 'admin'),
    } as unknown as CurrentGroup,
  };
}
