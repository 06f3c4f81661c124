import { shapeFieldLabel } from './shape-kinds';

/** Words for the document's top-level and lead/potential keys. */
const KEY_WORDS: Record<string, string> = {
  name: 'the name',
  notes: 'the notes',
  spacing: 'the lattice spacing a',
  material: 'the material',
  effectiveMass: 'the effective mass',
  field: 'the field B',
  fieldInLeads: 'the field in the leads',
  lattice: 'the lattice',
  hopping: 'the hopping t (eV)',
  sublatticePotential: 'the sublattice potential Δ (eV)',
  nextHopping: 'the next-nearest hopping t′ (eV)',
  removeDangling: 'the removal of dangling atoms',
  nx: 'the number of columns Nx',
  ny: 'the number of rows Ny',
  side: 'the side',
  start: 'the first mouth site',
  width: 'the width',
  height: 'the height',
  offset: 'the offset V_L',
  value: 'the value V',
  amplitude: 'the amplitude A',
  sigma: 'the spread σ',
  strength: 'the strength W',
  seed: 'the seed',
  cx: 'centre x',
  cy: 'centre y',
  x0: 'the left edge x₀',
  y0: 'the bottom edge y₀',
};

const TERM_WORDS: Record<string, string> = { block: 'block', gaussian: 'Gaussian bump', disorder: 'disorder', sites: 'site list' };

/**
 * Where an issue is, in words: "shape, member 2 of the union: semi-axis y (ry)" for
 * ['shape', 'of', 1, 'ry']. The document (when given) supplies each shape's kind,
 * so the field gets the label the form shows.
 */
export function fieldInWords(path: readonly (string | number)[], doc?: unknown): string {
  const parts: string[] = [];
  let node: unknown = doc;
  let key = '';
  for (let k = 0; k < path.length; k++) {
    const p = path[k];
    const parent = node as Record<string, unknown> | undefined;
    node = parent && typeof parent === 'object' ? (parent as Record<string | number, unknown>)[p] : undefined;
    const next = path[k + 1];
    if (p === 'shape' && k === 0) parts.push('shape');
    else if (p === 'of' && typeof next === 'number') {
      parts.push(`member ${next + 1} of the union`);
      node = (node as unknown[] | undefined)?.[next];
      k++;
    } else if (p === 'remove' && typeof next === 'number') {
      parts.push(`removed shape ${next + 1}`);
      node = (node as unknown[] | undefined)?.[next];
      k++;
    } else if (p === 'from') parts.push('base shape');
    else if (p === 'leads' && typeof next === 'number') {
      const name = ((node as unknown[] | undefined)?.[next] as { name?: string } | undefined)?.name;
      parts.push(name ? `lead ${next + 1} ('${name}')` : `lead ${next + 1}`);
      node = (node as unknown[] | undefined)?.[next];
      k++;
    } else if (p === 'potential' && typeof next === 'number') {
      const kind = ((node as unknown[] | undefined)?.[next] as { kind?: string } | undefined)?.kind;
      parts.push(`potential term ${next + 1}${kind && TERM_WORDS[kind] ? ` (${TERM_WORDS[kind]})` : ''}`);
      node = (node as unknown[] | undefined)?.[next];
      k++;
    } else if (p === 'grid') continue;
    else if (typeof p === 'number') parts.push(`entry ${p + 1}`);
    else {
      key = p;
      const kind = (parent as { kind?: unknown } | undefined)?.kind;
      const label = typeof kind === 'string' && parent !== doc ? shapeFieldLabel(kind, p) : null;
      parts.push(label ? `${label.replace(/ \(.*\)$/, '').toLowerCase()} (${p})` : (KEY_WORDS[p] ?? p));
    }
  }
  void key;
  if (!parts.length) return 'the document';
  return parts.join(', ');
}

/**
 * A validator's message in plain words, naming the field: "Shape, member 2 of the
 * union, semi-axis y (ry) is missing: enter a number." instead of "Invalid input:
 * expected number, received undefined". Messages already written for people (the
 * physics checks) keep their text behind the field's name.
 */
export function issueInWords(path: readonly (string | number)[], message: string, doc?: unknown): string {
  const where = fieldInWords(path, doc);
  const head = where.charAt(0).toUpperCase() + where.slice(1);
  const m = message.trim();
  let said: RegExpMatchArray | null;
  if ((said = m.match(/expected (\w+), received (undefined|null|NaN)/))) {
    const what = said[1] === 'number' || said[1] === 'int' ? 'a number' : said[1] === 'array' ? 'a list' : said[1] === 'string' ? 'some text' : `a ${said[1]}`;
    return `${head} is ${said[2] === 'undefined' ? 'missing' : 'empty'}: enter ${what}.`;
  }
  if (/expected int, received number/.test(m)) return `${head} must be a whole number.`;
  if ((said = m.match(/expected (\w+), received (\w+)/))) return `${head} must be ${said[1] === 'number' ? 'a number' : `a ${said[1]}`}, not a ${said[2]}.`;
  if ((said = m.match(/Too small: expected number to be >(=?)(-?[\d.e+]+)/))) {
    return said[1] ? `${head} must be ${said[2]} or more.` : `${head} must be greater than ${said[2]}.`;
  }
  if ((said = m.match(/Too big: expected number to be <(=?)(-?[\d.e+]+)/))) {
    return said[1] ? `${head} must be ${said[2]} or less.` : `${head} must be less than ${said[2]}.`;
  }
  if ((said = m.match(/Too big: expected string to have <=(\d+) characters/))) return `${head} allows at most ${said[1]} characters.`;
  if ((said = m.match(/Invalid option: expected one of (.*)$/))) return `${head} must be one of ${said[1].replace(/"/g, '').split('|').join(', ')}.`;
  if (/^Invalid input$/.test(m)) return `${head} is not valid.`;
  // A message written for people: keep it, behind the field's name unless it already names it.
  if (!path.length) return m;
  return `${head}: ${m}`;
}
