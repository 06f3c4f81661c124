/** Field schemas many answers share. Units: energies meV, lifetimes ps, lengths nm, field T. */
import * as z from 'zod';

/** A point in time as the server sends it: ISO 8601 with an offset (JSON turns a Date into this). */
export const timestamp = () => z.iso.datetime({ offset: true });

/** Infinity (ℓ_B at B = 0, λ at E ≤ 0) leaves JSON.stringify as null. */
export const numberOrInfinite = () => z.number().nullable().meta({ description: 'null stands for infinity' });

/** Who did something; null once the account is gone. */
export const personRef = z.object({ id: z.uuid(), name: z.string() });

export const groupParams = z.object({ groupId: z.uuid() });

/** Every error answer of the API. */
export const problemSchema = z
  .object({
    status: z.number().int().min(400).max(599),
    code: z.string().meta({ description: 'Stable machine-readable reason, e.g. validation_failed, not_found, forbidden.' }),
    message: z.string().meta({ description: 'A sentence for a person, naming what is wrong and where.' }),
    issues: z
      .array(z.object({ path: z.string().meta({ description: 'Body field path (leads.1.start) or query./params.-prefixed name.' }), message: z.string() }))
      .optional()
      .meta({ description: 'Only on validation_failed.' }),
  })
  .meta({ id: 'Problem', description: 'Every error answer of the API.' });
