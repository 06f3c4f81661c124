/**
 * What a model's lattice describes (docs/physics-model.md, "Physics modes"):
 * - `electrons`: electrons in a 2DEG. Lengths in nm, energies in meV, field in T;
 *   t = (ħ²/2m_e)/(m* / m_e)/a² from the material's effective mass.
 * - `microwave`: a flat microwave resonator (metal plates a height h apart, filled with
 *   a dielectric of relative permittivity ε_r) below the cut-off of its first vertical
 *   mode, whose TM0 field obeys ∇²ψ + k²ψ = 0 with ψ = 0 on the walls. Lengths in mm;
 *   the lattice operator is the same with t = 1/a² and the energy z replaced by k²
 *   (mm⁻²); poles are shown as complex frequencies f = c·√z/(2π√ε_r). No field, no
 *   potential, no lead offsets.
 */
import * as z from 'zod';

const electronPhysicsSchema = z.object({ kind: z.literal('electrons') });
const microwavePhysicsSchema = z.object({
  kind: z.literal('microwave'),
  /** Relative permittivity ε_r of the filling (1 for air). */
  permittivity: z.number().finite().min(1, 'the relative permittivity ε_r is at least 1').max(1000, 'ε_r above 1000 is not a microwave filling').default(1),
  /** Height h of the resonator between its plates (mm); sets the 2D limit c/(2h√ε_r). */
  height: z.number().finite().positive('the height h must be above 0 mm'),
});
export const physicsSchema = z
  .discriminatedUnion('kind', [electronPhysicsSchema, microwavePhysicsSchema], {
    error: 'physics.kind must be "electrons" or "microwave"',
  })
  .default({ kind: 'electrons' });

export type Physics = z.infer<typeof physicsSchema>;
export type PhysicsKind = Physics['kind'];

/** Units of a physics mode's document and raw engine figures, for messages and labels. */
interface PhysicsUnits {
  length: 'nm' | 'mm';
  /** Unit of z = E (meV) or k² (mm⁻²). */
  energy: 'meV' | 'mm⁻²';
  /** Nanometres per length unit (1 or 10⁶), to store every dimension in nm. */
  nmPerLength: number;
}

export function physicsUnits(kind: PhysicsKind): PhysicsUnits {
  return kind === 'microwave' ? { length: 'mm', energy: 'mm⁻²', nmPerLength: 1e6 } : { length: 'nm', energy: 'meV', nmPerLength: 1 };
}
