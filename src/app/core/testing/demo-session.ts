import type { Role } from '../../../../shared/api/enums';
import type { Session } from '../../../../shared/api/auth';

/** A session of the seed's Harrow Lake lab with the given role, for specs. */
export function demoSession(role: Role, extraGroups: Session['groups'] = []): Session {
  return {
    user: { id: 'u-ada', email: 'ada.admin@harrow-lake.example', name: 'Ada Marlow' },
    groups: [{ id: 'g-harrow', name: 'Harrow Lake Mesoscopics Lab', slug: 'harrow-lake', role }, ...extraGroups],
    csrfToken: 'csrf-test',
    siteOperator: false,
  };
}
