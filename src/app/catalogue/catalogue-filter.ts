/**
 * The catalogue filter as it lives in the URL (so a search can be shared) and as
 * the API reads it: the same parameter names on both sides, values as strings.
 * Units follow the API: energies and widths in meV, lifetimes in ps, field in T,
 * dimensions in nm.
 */
export interface CatalogueFilter {
  q: string;
  family: string;
  material: string;
  emin: string;
  emax: string;
  gmin: string;
  gmax: string;
  qmin: string;
  qmax: string;
  taumin: string;
  taumax: string;
  bmin: string;
  bmax: string;
  /** Frequency range (GHz) of microwave resonances (fmin/fmax). */
  fmin: string;
  fmax: string;
  /** '' (any), 'true' (above the lattice-validity limit) or 'false' (within it). */
  aboveLimit: string;
  /** Which key dimension the range applies to (width, height, radius, ...). */
  dimKey: string;
  dimMin: string;
  dimMax: string;
  tags: string[];
}

/** The geometry dimensions the API sorts by (sort=dim.NAME), the same names as the dimension filter. */
export const dimensionKeys = ['width', 'height', 'radius', 'length', 'rx', 'ry', 'inner', 'outer', 'area'] as const;
export type DimensionSortKey = `dim.${(typeof dimensionKeys)[number]}`;
export type SortKey = 'energy' | 'width' | 'lifetime' | 'quality' | 'geometry' | 'model' | 'date' | 'tags' | DimensionSortKey;

export interface CatalogueView {
  filter: CatalogueFilter;
  sort: SortKey | '';
  dir: 'asc' | 'desc' | '';
  /** A numbered page (older links); the table itself pages by cursor. */
  page: number;
  pageSize: number;
  /** The API's opaque keyset cursor of the page shown ('' for the first page). */
  cursor: string;
}

export const emptyFilter: CatalogueFilter = {
  q: '',
  family: '',
  material: '',
  emin: '',
  emax: '',
  gmin: '',
  gmax: '',
  qmin: '',
  qmax: '',
  taumin: '',
  taumax: '',
  bmin: '',
  bmax: '',
  fmin: '',
  fmax: '',
  aboveLimit: '',
  dimKey: 'width',
  dimMin: '',
  dimMax: '',
  tags: [],
};

const plainKeys = ['q', 'family', 'material', 'emin', 'emax', 'gmin', 'gmax', 'qmin', 'qmax', 'taumin', 'taumax', 'bmin', 'bmax', 'fmin', 'fmax', 'aboveLimit'] as const;
const sortKeys: readonly SortKey[] = [
  'energy',
  'width',
  'lifetime',
  'quality',
  'geometry',
  'model',
  'date',
  'tags',
  ...dimensionKeys.map((k): DimensionSortKey => `dim.${k}`),
];
const defaultPageSize = 25;

/** Query parameters of a view (URL and API alike); empty fields are left out. */
export function viewToQuery(view: CatalogueView): Record<string, string | string[]> {
  const out: Record<string, string | string[]> = {};
  for (const key of plainKeys) {
    const v = view.filter[key].trim();
    if (v) out[key] = v;
  }
  const dim = view.filter.dimKey.trim();
  if (dim && view.filter.dimMin.trim()) out[`dim.${dim}.min`] = view.filter.dimMin.trim();
  if (dim && view.filter.dimMax.trim()) out[`dim.${dim}.max`] = view.filter.dimMax.trim();
  const tags = view.filter.tags.map((t) => t.trim()).filter(Boolean);
  if (tags.length === 1) out['tag'] = tags[0];
  else if (tags.length > 1) out['tag'] = tags;
  if (view.sort) {
    out['sort'] = view.sort;
    out['dir'] = view.dir || 'asc';
  }
  if (view.cursor) out['cursor'] = view.cursor;
  else if (view.page > 1) out['page'] = String(view.page);
  if (view.pageSize !== defaultPageSize) out['pageSize'] = String(view.pageSize);
  return out;
}

/** The view a URL's query parameters describe; unknown or malformed values fall back to defaults. */
export function queryToView(params: { get(name: string): string | null; getAll(name: string): string[]; keys: string[] }): CatalogueView {
  const filter: CatalogueFilter = { ...emptyFilter, tags: params.getAll('tag').flatMap((t) => t.split(',')).map((t) => t.trim()).filter(Boolean) };
  for (const key of plainKeys) filter[key] = params.get(key) ?? '';
  for (const name of params.keys) {
    const m = /^dim\.([A-Za-z]\w*)\.(min|max)$/.exec(name);
    if (!m) continue;
    filter.dimKey = m[1];
    if (m[2] === 'min') filter.dimMin = params.get(name) ?? '';
    else filter.dimMax = params.get(name) ?? '';
  }
  const sort = params.get('sort') as SortKey | null;
  // Sorted by a dimension without filtering on one: the dimension picker shows the sorted one.
  const sortedDim = /^dim\.([A-Za-z]\w*)$/.exec(sort ?? '');
  if (sortedDim && !params.keys.some((k) => k.startsWith('dim.'))) filter.dimKey = sortedDim[1]!;
  const dir = params.get('dir');
  const page = Number(params.get('page') ?? 1);
  const pageSize = Number(params.get('pageSize') ?? defaultPageSize);
  const cursor = params.get('cursor') ?? '';
  return {
    filter,
    sort: sort && sortKeys.includes(sort) ? sort : '',
    dir: dir === 'asc' || dir === 'desc' ? dir : '',
    page: Number.isInteger(page) && page >= 1 ? page : 1,
    pageSize: Number.isInteger(pageSize) && pageSize >= 1 && pageSize <= 200 ? pageSize : defaultPageSize,
    cursor: /^[A-Za-z0-9_-]+$/.test(cursor) ? cursor : '',
  };
}

/** Numeric fields that must parse as numbers, with the words used when they do not. */
export const numericFields: { key: keyof CatalogueFilter; label: string }[] = [
  { key: 'emin', label: 'E from' },
  { key: 'emax', label: 'E to' },
  { key: 'gmin', label: 'Γ from' },
  { key: 'gmax', label: 'Γ to' },
  { key: 'qmin', label: 'Q from' },
  { key: 'qmax', label: 'Q to' },
  { key: 'taumin', label: 'τ from' },
  { key: 'taumax', label: 'τ to' },
  { key: 'bmin', label: 'B from' },
  { key: 'bmax', label: 'B to' },
  { key: 'fmin', label: 'f from' },
  { key: 'fmax', label: 'f to' },
  { key: 'dimMin', label: 'Dimension from' },
  { key: 'dimMax', label: 'Dimension to' },
];
