import type { Role } from '../../../../shared/api/enums';
import { type Session, sessionRoute } from '../../../../shared/api/auth';
import { answerFixture, fixtureId } from './answer-fixtures';

/** The id of the seed's Harrow Lake lab in specs. */
export const harrowGroupId = fixtureId(0x4a11);

/** A session of the seed's Harrow Lake lab with the given role, for specs (parsed through the Session schema). */
export function demoSession(role: Role, extraGroups: Session['groups'] = []): Session {
  return answerFixture(sessionRoute, {
    user: { id: fixtureId(0xada), email: 'ada.admin@harrow-lake.example', name: 'Ada Marlow' },
    groups: [{ id: harrowGroupId, name: 'Harrow Lake Mesoscopics Lab', slug: 'harrow-lake', role }, ...extraGroups],
    csrfToken: 'csrf-test',
    siteOperator: false,
  });
}
