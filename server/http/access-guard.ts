import type { RequestHandler } from 'express';
import type { Access } from '../../shared/api/enums.js';
import { requireAuth } from '../auth/require-auth.js';
import { requireOperator } from '../auth/require-operator.js';
import { requireRole } from '../auth/require-role.js';

/**
 * The middleware that enforces a declared access rule. Group rules resolve :groupId to the
 * caller's membership (404 to non-members, 403 to a member without the role); all but
 * `public` also check sign-in and, on unsafe methods, the CSRF header.
 */
export function accessGuard(access: Access): RequestHandler[] {
  switch (access) {
    case 'public':
      return [];
    case 'signed-in':
      return [requireAuth];
    case 'member':
      return [requireRole()];
    case 'designer':
      return [requireRole('designer')];
    case 'analyst':
      return [requireRole('designer', 'reviewer')];
    case 'admin':
      return [requireRole('admin')];
    case 'operator':
      return [requireOperator];
  }
}
