import * as z from 'zod';
import {
  annulusSchema,
  bitmapSchema,
  cavityModelSchema,
  diskSchema,
  ellipseSchema,
  polygonSchema,
  rectangleSchema,
  siteListSchema,
  stadiumSchema,
  type Shape,
} from '../model/cavity-model.js';

/**
 * The shape tree as OpenAPI should show it. shared/model's shapeSchema first checks
 * `kind` on a loose object and then pipes into the union, so a generator only sees
 * `{ kind: string }`; this lists the same primitive schemas as one tagged union. Only
 * the two recursive branches are restated here (the test compares both on samples).
 */
const shapeDescription: z.ZodType<Shape> = z
  .lazy(() =>
    z.discriminatedUnion('kind', [
      rectangleSchema,
      diskSchema,
      ellipseSchema,
      stadiumSchema,
      annulusSchema,
      polygonSchema,
      siteListSchema,
      bitmapSchema,
      z.object({ kind: z.literal('union'), of: z.array(shapeDescription).min(1) }),
      z.object({ kind: z.literal('subtract'), from: shapeDescription, remove: z.array(shapeDescription) }),
    ]),
  )
  .meta({ id: 'Shape', description: 'Cavity outline in nm on the lattice grid; union and subtract nest other shapes.' });

/** The cavity model document (lengths nm, energies meV, field T) with the shape tree spelled out. */
export const cavityModelDescription = cavityModelSchema.extend({ shape: shapeDescription }).meta({
  id: 'CavityModel',
  description:
    'What a user edits and every run is computed from. The server also checks rules this schema cannot express ' +
    '(known material preset, grid and site caps, one connected cavity, lead mouths inside the cavity) and answers ' +
    '400 validation_failed with the field path of each problem.',
});
