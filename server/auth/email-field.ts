import { z } from 'zod';

/** An e-mail as typed in a form: surrounding spaces and case do not matter (stored lower-case). */
export const emailField = z.string().trim().toLowerCase().pipe(z.email('must be an e-mail address').max(320));
