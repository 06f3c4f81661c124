import { FormArray, FormControl, FormGroup, Validators } from '@angular/forms';
import type { CavityModelInput, Lead, LeadSide, Shape } from '../../../shared/model/cavity-model';
import { MATERIAL_PRESETS } from '../../../shared/model/materials';

/** Shapes the editor offers as plain fields; anything else is edited as JSON. */
export const simpleShapeKinds = ['rectangle', 'disk', 'ellipse', 'stadium', 'annulus'] as const;
export type SimpleShapeKind = (typeof simpleShapeKinds)[number];
export type ShapeMode = SimpleShapeKind | 'json';

/** The fields of each simple shape, in the order the editor shows them, with labels (lengths nm). */
export const shapeFields: Record<SimpleShapeKind, { key: ShapeField; label: string }[]> = {
  rectangle: [
    { key: 'x0', label: 'x₀ (nm)' },
    { key: 'y0', label: 'y₀ (nm)' },
    { key: 'width', label: 'Width (nm)' },
    { key: 'height', label: 'Height (nm)' },
  ],
  disk: [
    { key: 'cx', label: 'Centre x (nm)' },
    { key: 'cy', label: 'Centre y (nm)' },
    { key: 'radius', label: 'Radius (nm)' },
  ],
  ellipse: [
    { key: 'cx', label: 'Centre x (nm)' },
    { key: 'cy', label: 'Centre y (nm)' },
    { key: 'rx', label: 'Semi-axis x (nm)' },
    { key: 'ry', label: 'Semi-axis y (nm)' },
    { key: 'angleDeg', label: 'Rotation (°)' },
  ],
  stadium: [
    { key: 'cx', label: 'Centre x (nm)' },
    { key: 'cy', label: 'Centre y (nm)' },
    { key: 'length', label: 'Straight length (nm)' },
    { key: 'radius', label: 'Radius (nm)' },
  ],
  annulus: [
    { key: 'cx', label: 'Centre x (nm)' },
    { key: 'cy', label: 'Centre y (nm)' },
    { key: 'inner', label: 'Inner radius (nm)' },
    { key: 'outer', label: 'Outer radius (nm)' },
  ],
};

const shapeFieldKeys = ['x0', 'y0', 'width', 'height', 'cx', 'cy', 'radius', 'rx', 'ry', 'angleDeg', 'length', 'inner', 'outer'] as const;
export type ShapeField = (typeof shapeFieldKeys)[number];

const num = (value: number | null) => new FormControl<number | null>(value);

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
 * "grid.nx", "shape.radius", "leads.1.start") so the API's issues land next to the
 * field they concern. The material preset and a custom mass are two controls for
 * one document field; "shape.json" holds shapes without plain fields.
 */
export function modelForm() {
  const shape = new FormGroup({
    kind: new FormControl<ShapeMode>('rectangle', { nonNullable: true }),
    json: new FormControl<string>('', { nonNullable: true }),
    ...(Object.fromEntries(shapeFieldKeys.map((k) => [k, num(null)])) as Record<ShapeField, FormControl<number | null>>),
  });
  return new FormGroup({
    name: new FormControl<string>('', { nonNullable: true, validators: [Validators.required] }),
    notes: new FormControl<string>('', { nonNullable: true }),
    spacing: num(5),
    material: new FormControl<string>('gaas', { nonNullable: true }),
    effectiveMass: num(0.067),
    grid: new FormGroup({ nx: num(60), ny: num(40) }),
    field: num(0),
    shape,
    leads: new FormArray<LeadForm>([]),
    potential: new FormControl<string>('[]', { nonNullable: true }),
  });
}
export type ModelForm = ReturnType<typeof modelForm>;

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

/** Fills the form from a document (leads rebuilt; non-simple shapes shown as JSON). */
export function fillForm(form: ModelForm, doc: CavityModelInput): void {
  const custom = typeof doc.material !== 'string';
  const leads = form.controls.leads;
  leads.clear({ emitEvent: false });
  for (const lead of doc.leads ?? []) leads.push(leadGroup(lead), { emitEvent: false });
  const shape = doc.shape as Shape & Record<string, unknown>;
  const simple = (simpleShapeKinds as readonly string[]).includes(shape.kind);
  const numbers = Object.fromEntries(
    shapeFieldKeys.map((key) => [key, simple && typeof shape[key] === 'number' ? (shape[key] as number) : null]),
  ) as Record<ShapeField, number | null>;
  const shapeValue = { kind: (simple ? shape.kind : 'json') as ShapeMode, json: simple ? '' : JSON.stringify(shape, null, 2), ...numbers };
  form.setValue(
    {
      name: doc.name,
      notes: doc.notes ?? '',
      spacing: doc.spacing,
      material: custom ? customMaterial : (doc.material as string),
      effectiveMass: custom ? (doc.material as { effectiveMass: number }).effectiveMass : null,
      grid: { nx: doc.grid.nx, ny: doc.grid.ny },
      field: doc.field ?? 0,
      shape: shapeValue,
      leads: leads.getRawValue(),
      potential: JSON.stringify(doc.potential ?? [], null, 2),
    },
    { emitEvent: true },
  );
}

/** Problems turning form text into a document (bad JSON), by field path. */
export interface FormReadIssue {
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
  let shape: unknown;
  if (v.shape.kind === 'json') {
    shape = parseJson(v.shape.json, 'shape.json', issues) ?? { kind: '' };
  } else {
    const out: Record<string, unknown> = { kind: v.shape.kind };
    for (const { key } of shapeFields[v.shape.kind]) {
      const value = v.shape[key];
      if (key === 'angleDeg' && value == null) continue;
      out[key] = value;
    }
    shape = out;
  }
  const potential = parseJson(v.potential, 'potential', issues) ?? [];
  const document = {
    name: v.name.trim(),
    ...(v.notes.trim() ? { notes: v.notes } : {}),
    spacing: v.spacing,
    material: v.material === customMaterial ? { effectiveMass: v.effectiveMass } : v.material,
    grid: { nx: v.grid.nx, ny: v.grid.ny },
    shape,
    potential,
    field: v.field ?? 0,
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

function parseJson(text: string, path: string, issues: FormReadIssue[]): unknown {
  try {
    return JSON.parse(text);
  } catch (err) {
    issues.push({ path, message: `not valid JSON: ${err instanceof Error ? err.message : String(err)}` });
    return undefined;
  }
}
