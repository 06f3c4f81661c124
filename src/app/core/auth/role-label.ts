import type { Role } from '../../../../shared/api/enums';

/** The words shown for each role, with what it may do, for selects and lists. */
export const roleLabel: Record<Role, string> = {
  admin: 'Admin',
  designer: 'Designer',
  reviewer: 'Reviewer',
  viewer: 'Viewer',
};

export const roleDuty: Record<Role, string> = {
  admin: 'members, roles and invitations, plus everything a designer and reviewer do',
  designer: 'creates cavity models and runs',
  reviewer: 'decides on fabrication candidates',
  viewer: 'reads everything, changes nothing',
};
