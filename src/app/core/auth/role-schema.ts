// zod/mini: the classic build pulls ~450 kB (all locales) into whichever chunk uses it.
import * as z from 'zod/mini';
import { roles } from './session';

/** The role field of API payloads, for the features' zod schemas (lazy chunks only). */
export const roleSchema = z.enum(roles as ['admin', 'designer', 'reviewer', 'viewer']);
