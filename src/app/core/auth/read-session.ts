import { type GroupMembership, type Role, type Session, roles } from './session';

/** A Session answer that does not have the contract's shape; names the first wrong field. */
export class SessionShapeError extends Error {
  constructor(
    readonly path: string,
    expected: string,
  ) {
    super(`The server's session answer is not as expected: ${path} should be ${expected}.`);
    this.name = 'SessionShapeError';
  }
}

function text(value: unknown, path: string): string {
  if (typeof value !== 'string') throw new SessionShapeError(path, 'a string');
  return value;
}

function record(value: unknown, path: string): Record<string, unknown> {
  if (typeof value !== 'object' || value === null || Array.isArray(value)) {
    throw new SessionShapeError(path, 'an object');
  }
  return value as Record<string, unknown>;
}

/**
 * Checks a Session by hand rather than with zod: it runs on every page load, and
 * keeping zod out of the first chunk halves that chunk (~750 → ~340 kB raw).
 */
export function readSession(body: unknown): Session {
  const root = record(body, 'session');
  const user = record(root['user'], 'user');
  if (!Array.isArray(root['groups'])) throw new SessionShapeError('groups', 'a list');
  const groups = root['groups'].map((g: unknown, i: number): GroupMembership => {
    const group = record(g, `groups.${i}`);
    const role = group['role'];
    if (!roles.includes(role as Role)) throw new SessionShapeError(`groups.${i}.role`, 'one of ' + roles.join(', '));
    return {
      id: text(group['id'], `groups.${i}.id`),
      name: text(group['name'], `groups.${i}.name`),
      slug: text(group['slug'], `groups.${i}.slug`),
      role: role as Role,
    };
  });
  return {
    user: { id: text(user['id'], 'user.id'), email: text(user['email'], 'user.email'), name: text(user['name'], 'user.name') },
    groups,
    csrfToken: text(root['csrfToken'], 'csrfToken'),
    // Absent from servers older than the site-operator role: nobody is operator there.
    siteOperator: root['siteOperator'] === true,
  };
}
