/**
 * The enumerations the HTTP contract, the database and the client share. Each list is
 * written here once; the database schema, the routes and the screens import it.
 */
import * as z from 'zod';

/** The life of a run: queued → running → completed | failed | cancelled (a lost run goes back to queued). */
export const RUN_STATUSES = ['queued', 'running', 'completed', 'failed', 'cancelled'] as const;
export type RunStatus = (typeof RUN_STATUSES)[number];
export const runStatusSchema = z.enum(RUN_STATUSES).meta({ id: 'RunStatus' });
/** The states a run leaves no more. */
export const FINISHED_RUN_STATUSES: readonly RunStatus[] = ['completed', 'failed', 'cancelled'];

/** What a run computes; each kind has its queue (server/jobs/queues.ts). */
export const RUN_KINDS = ['pole-search', 'transmission'] as const;
export type RunKind = (typeof RUN_KINDS)[number];
export const runKindSchema = z.enum(RUN_KINDS).meta({ id: 'RunKind' });

/** A computation queued apart from runs (peak fits, mode maps): no cancellation. */
const JOB_STATUSES = ['queued', 'running', 'completed', 'failed'] as const;
export const jobStatusSchema = z.enum(JOB_STATUSES);

/** Roles inside one research group; admin can also do what designer and reviewer do. */
export const ROLES = ['admin', 'designer', 'reviewer', 'viewer'] as const;
export type Role = (typeof ROLES)[number];
export const roleSchema = z.enum(ROLES).meta({ id: 'Role' });

/**
 * Who may call a route, as the server's access guard enforces it (server/http/access-guard.ts):
 * anyone; any signed-in user; a member of the route's group (any role, or designer, designer or
 * reviewer, admin; admin passes every role check); the site operator (the local mail outbox).
 */
export const ACCESS_KINDS = ['public', 'signed-in', 'member', 'designer', 'analyst', 'admin', 'operator'] as const;
export type Access = (typeof ACCESS_KINDS)[number];

// Fabrication states (issue 13) join this file when fabrication records arrive.
