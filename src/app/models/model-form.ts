import { FormArray, FormControl, FormGroup, Validators } from '@angular/forms';
import type { CavityModelInput, Lead, LeadSide, Shape } from '../../../shared/model/cavity-model';
import { MATERIAL_PRESETS, findHoneycombPreset } from '../../../shared/model/materials';

const num = (value: number | null) => new FormControl<number | null>(value);

/** The graphene preset (shared/model/materials.ts): a_CC, t and where they come from. */
export const graphene = findHoneycombPreset('graphene')!;

export function leadGroup(lead?: Partial<Lead>) {
  return new FormGroup({
    side: new FormControl<LeadSide>(lead?.side ?? 'left', { nonNullable: true }),
    start: num(lead?.start ?? 0),
    width: num(lead?.width ?? 1),
    offset: num(lead?.offset ?? 0),
    name: new FormControl<string>(lead?.name ?? '', { nonNullable: true }),
  });
}
export type LeadForm = ReturnType<typeof leadGroup>;

/**
 * The editor's form. Control paths match the document's field paths ("spacing",
 * "grid.nx", "leads.1.start") so the API's issues land next to the field they
 * concern. The material preset and a custom mass are two controls for one document
 * field.
 */
export function modelForm() {
  return new FormGroup({
    name: new FormControl<string>('', { nonNullable: true, validators: [Validators.required] }),
    notes: new FormControl<string>('', { nonNullable: true }),
    /** electrons (2DEG: nm, meV, T) or microwave (flat resonator: mm, ε_r, h). */
    physics: new FormControl<'electrons' | 'microwave'>('electrons', { nonNullable: true }),
    /** Microwave mode: relative permittivity ε_r of the filling and the height h (mm) between the plates. */
    permittivity: num(1),
    height: num(null),
    spacing: num(5),
    material: new FormControl<string>('gaas', { nonNullable: true }),
    effectiveMass: num(0.067),
    grid: new FormGroup({ nx: num(60), ny: num(40) }),
    field: num(0),
    /** The field acts in the leads too (document `fieldInLeads`); off: field-free leads, the contract's default. */
    fieldInLeads: new FormControl<boolean>(false, { nonNullable: true }),
    /**
     * The lattice: square (t from the material's mass) or honeycomb (graphene: t, Δ and t' in eV,
     * the spacing is a_CC). Electrons only; the microwave mode is always square.
     */
    lattice: new FormGroup({
      kind: new FormControl<'square' | 'honeycomb'>('square', { nonNullable: true }),
      hopping: num(graphene.hopping),
      sublatticePotential: num(0),
      nextHopping: num(0),
      removeDangling: new FormControl<boolean>(false, { nonNullable: true }),
    }),
    // The shape tree and the potential terms are edited by their own components (shape-editor.ts,
    // potential-editor.ts); the form holds them as document values.
    shape: new FormControl<Record<string, unknown>>({ kind: 'rectangle' }, { nonNullable: true }),
    leads: new FormArray<LeadForm>([]),
    potential: new FormControl<Record<string, unknown>[]>([], { nonNullable: true }),
  });
}
type ModelForm = ReturnType<typeof modelForm>;

/** The choice in the material select that means "give the effective mass yourself". */
export const customMaterial = 'custom';
export const materialChoices = [
  ...MATERIAL_PRESETS.map((m) => ({ id: m.id, label: `${m.label} — m* = ${m.effectiveMass} mₑ` })),
  { id: customMaterial, label: 'Other: effective mass m*/mₑ' },
];

/** A new model's starting point: a GaAs rectangle with one lead on each side. */
export const starterModel: CavityModelInput = {
  name: '',
  spacing: 5,
  material: 'gaas',
  grid: { nx: 60, ny: 40 },
  shape: { kind: 'rectangle', x0: 0, y0: 0, width: 300, height: 200 },
  field: 0,
  leads: [
    { side: 'left', start: 10, width: 20, offset: 0 },
    { side: 'right', start: 10, width: 20, offset: 0 },
  ],
  potential: [],
};

/** Fills the form from a document (leads rebuilt). */
export function fillForm(form: ModelForm, doc: CavityModelInput): void {
  const custom = doc.material != null && typeof doc.material !== 'string';
  const physics = doc.physics as { kind?: string; permittivity?: number; height?: number } | undefined;
  const microwave = physics?.kind === 'microwave';
  const lattice = (doc.lattice ?? {}) as { kind?: string; hopping?: number; sublatticePotential?: number; nextHopping?: number; removeDangling?: boolean };
  const honeycomb = lattice.kind === 'honeycomb';
  const leads = form.controls.leads;
  leads.clear({ emitEvent: false });
  for (const lead of doc.leads ?? []) leads.push(leadGroup(lead), { emitEvent: false });
  form.setValue(
    {
      name: doc.name ?? '',
      notes: doc.notes ?? '',
      physics: microwave ? 'microwave' : 'electrons',
      permittivity: microwave ? (physics?.permittivity ?? 1) : 1,
      height: microwave ? (physics?.height ?? null) : null,
      spacing: doc.spacing ?? null,
      material: custom ? customMaterial : ((doc.material as string | undefined) ?? 'gaas'),
      effectiveMass: custom ? ((doc.material as { effectiveMass: number }).effectiveMass ?? null) : null,
      grid: { nx: doc.grid?.nx ?? null, ny: doc.grid?.ny ?? null },
      field: doc.field ?? 0,
      fieldInLeads: doc.fieldInLeads === true,
      lattice: {
        kind: honeycomb ? 'honeycomb' : 'square',
        hopping: honeycomb ? (lattice.hopping ?? null) : graphene.hopping,
        sublatticePotential: honeycomb ? (lattice.sublatticePotential ?? 0) : 0,
        nextHopping: honeycomb ? (lattice.nextHopping ?? 0) : 0,
        removeDangling: honeycomb && lattice.removeDangling === true,
      },
      shape: structuredClone((doc.shape ?? { kind: 'rectangle' }) as Shape) as unknown as Record<string, unknown>,
      leads: leads.getRawValue(),
      potential: structuredClone((doc.potential ?? []) as unknown as Record<string, unknown>[]),
    },
    { emitEvent: true },
  );
}

/** Problems turning form text into a document (bad JSON), by field path. */
interface FormReadIssue {
  path: string;
  message: string;
}

/**
 * The document the form describes. Empty number fields become NaN-free nulls that the
 * schema then names ("expected number"), so the user hears about them by field.
 */
export function readForm(form: ModelForm): { document: CavityModelInput; issues: FormReadIssue[] } {
  const v = form.getRawValue();
  const issues: FormReadIssue[] = [];
  if (v.physics === 'microwave') return { document: microwaveDocument(v), issues };
  const honeycomb = v.lattice.kind === 'honeycomb';
  const field = v.field ?? 0;
  const document = {
    name: v.name.trim(),
    ...(v.notes.trim() ? { notes: v.notes } : {}),
    spacing: v.spacing,
    // The honeycomb has no effective mass: its hopping is given (eV), and the schema refuses a material.
    ...(honeycomb ? { lattice: honeycombLattice(v.lattice) } : { material: v.material === customMaterial ? { effectiveMass: v.effectiveMass } : v.material }),
    grid: { nx: v.grid.nx, ny: v.grid.ny },
    shape: v.shape,
    potential: v.potential,
    field,
    ...(field !== 0 && v.fieldInLeads ? { fieldInLeads: true } : {}),
    leads: v.leads.map((l) => ({
      side: l.side,
      start: l.start,
      width: l.width,
      offset: l.offset ?? 0,
      ...(l.name.trim() ? { name: l.name.trim() } : {}),
    })),
  } as unknown as CavityModelInput;
  return { document, issues };
}

/** The document's honeycomb block: t always, Δ, t' and the clean-up only when set (their defaults are 0 and off). */
function honeycombLattice(l: ReturnType<ModelForm['getRawValue']>['lattice']) {
  return {
    kind: 'honeycomb',
    hopping: l.hopping,
    ...(l.sublatticePotential ? { sublatticePotential: l.sublatticePotential } : {}),
    ...(l.nextHopping ? { nextHopping: l.nextHopping } : {}),
    ...(l.removeDangling ? { removeDangling: true } : {}),
  };
}

/**
 * A microwave resonator's document: physics with ε_r and h, and none of the fields the
 * schema refuses there (material, field, potential terms, lead offsets).
 */
function microwaveDocument(v: ReturnType<ModelForm['getRawValue']>): CavityModelInput {
  return {
    name: v.name.trim(),
    ...(v.notes.trim() ? { notes: v.notes } : {}),
    physics: { kind: 'microwave', permittivity: v.permittivity, height: v.height },
    spacing: v.spacing,
    grid: { nx: v.grid.nx, ny: v.grid.ny },
    shape: v.shape,
    leads: v.leads.map((l) => ({ side: l.side, start: l.start, width: l.width, offset: 0, ...(l.name.trim() ? { name: l.name.trim() } : {}) })),
  } as unknown as CavityModelInput;
}
