import type { Shape } from '../../../shared/model/cavity-model';

/** Every shape family the editor offers, with the words it shows for it. */
export const shapeKindLabels = {
  rectangle: 'Rectangle',
  disk: 'Disk',
  ellipse: 'Ellipse',
  stadium: 'Stadium',
  annulus: 'Annulus (ring)',
  polygon: 'Polygon',
  union: 'Union of shapes',
  subtract: 'Shape minus shapes',
  sites: 'Site list (JSON)',
  bitmap: 'Drawn outline (bitmap)',
} as const;
export type ShapeKind = keyof typeof shapeKindLabels;
export const shapeKinds = Object.keys(shapeKindLabels) as ShapeKind[];

/** A number field of a simple shape: the document key and the label in words (lengths nm). */
interface ShapeNumberField {
  key: string;
  label: string;
  optional?: boolean;
}

/** The plain number fields of each simple family, in the order the editor shows them. */
export const shapeNumberFields: Partial<Record<ShapeKind, ShapeNumberField[]>> = {
  rectangle: [
    { key: 'x0', label: 'Left edge x₀ (nm)' },
    { key: 'y0', label: 'Bottom edge y₀ (nm)' },
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
    { key: 'angleDeg', label: 'Rotation (°)', optional: true },
  ],
  stadium: [
    { key: 'cx', label: 'Centre x (nm)' },
    { key: 'cy', label: 'Centre y (nm)' },
    { key: 'length', label: 'Straight length (nm)' },
    { key: 'radius', label: 'End radius (nm)' },
  ],
  annulus: [
    { key: 'cx', label: 'Centre x (nm)' },
    { key: 'cy', label: 'Centre y (nm)' },
    { key: 'inner', label: 'Inner radius (nm)' },
    { key: 'outer', label: 'Outer radius (nm)' },
  ],
};

/** The label of a document key of any shape, for messages ("Semi-axis y (nm)"). */
export function shapeFieldLabel(kind: string, key: string): string | null {
  const f = shapeNumberFields[kind as ShapeKind]?.find((x) => x.key === key);
  if (f) return f.label;
  const others: Record<string, string> = {
    vertices: 'Vertices',
    list: 'Site list',
    of: 'Members',
    from: 'Base shape',
    remove: 'Removed shapes',
    data: 'Bitmap data',
    kind: 'Shape kind',
  };
  return others[key] ?? null;
}

/** The size of the area a new shape should fill (nm): the grid's extent. */
export interface GridExtent {
  widthNm: number;
  heightNm: number;
}

/**
 * A sensible new shape of a family, centred in the grid, so choosing a family
 * never leaves empty fields. A previous shape's centre and size carry over where
 * both families have them.
 */
export function defaultShape(kind: ShapeKind, extent: GridExtent, previous?: Record<string, unknown>): Shape {
  const w = extent.widthNm > 0 ? extent.widthNm : 300;
  const h = extent.heightNm > 0 ? extent.heightNm : 200;
  const cx = num(previous?.['cx']) ?? round(w / 2);
  const cy = num(previous?.['cy']) ?? round(h / 2);
  const r = round(Math.min(w, h) * 0.4);
  switch (kind) {
    case 'rectangle':
      return { kind, x0: round(w * 0.1), y0: round(h * 0.1), width: round(w * 0.8), height: round(h * 0.8) };
    case 'disk':
      return { kind, cx, cy, radius: num(previous?.['radius']) ?? r };
    case 'ellipse':
      return { kind, cx, cy, rx: num(previous?.['rx']) ?? round(w * 0.4), ry: num(previous?.['ry']) ?? round(h * 0.4) };
    case 'stadium':
      return { kind, cx, cy, length: round(w * 0.3), radius: round(Math.min(w * 0.25, h * 0.4)) };
    case 'annulus':
      return { kind, cx, cy, inner: round(r * 0.5), outer: r };
    case 'polygon':
      return {
        kind,
        vertices: [
          [round(w * 0.1), round(h * 0.1)],
          [round(w * 0.9), round(h * 0.1)],
          [round(w / 2), round(h * 0.9)],
        ],
      };
    case 'union':
      return { kind, of: [previous && isShape(previous) ? (previous as unknown as Shape) : defaultShape('disk', extent)] };
    case 'subtract':
      return {
        kind,
        from: previous && isShape(previous) && previous['kind'] !== 'subtract' ? (previous as unknown as Shape) : defaultShape('rectangle', extent),
        remove: [{ kind: 'disk', cx, cy, radius: round(r * 0.3) }],
      };
    case 'sites':
      return { kind, list: [[0, 0]] };
    case 'bitmap':
      return { kind, width: 8, height: 1, data: '/w==' };
  }
}

function isShape(v: Record<string, unknown>): boolean {
  return typeof v['kind'] === 'string';
}

function num(v: unknown): number | undefined {
  return typeof v === 'number' && Number.isFinite(v) ? v : undefined;
}

/** Rounds to 3 significant figures so default dimensions read as plain numbers. */
function round(v: number): number {
  return Number(v.toPrecision(3));
}
