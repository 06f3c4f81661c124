/**
 * A path into a cavity model document, written with dots: `field`,
 * `potential.0.value`, `shape.radius`, `leads.1.width`. A study sets the number at
 * the path to each of its values; the path must lead to a number that exists in
 * the document (a study never invents fields), so a typo gives a clear error.
 */

class ModelPathError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'ModelPathError';
  }
}

/** The parts of a dotted path; numeric parts index arrays. */
function pathParts(path: string): (string | number)[] {
  if (typeof path !== 'string' || !/^[A-Za-z0-9_]+(\.[A-Za-z0-9_]+)*$/.test(path)) {
    throw new ModelPathError(`'${path}' is not a path into the model (write it with dots, e.g. field or potential.0.value)`);
  }
  return path.split('.').map((p) => (/^\d+$/.test(p) ? Number(p) : p));
}

/**
 * The number at `path` in `doc`. Two defaults of the schema count as present:
 * `field` (0 T) and a lead's `offset` (0 meV), so a sweep of the field works on a
 * document that leaves it out.
 */
export function numberAtPath(doc: unknown, path: string): number {
  const parts = pathParts(path);
  let node: unknown = doc;
  for (let k = 0; k < parts.length; k++) {
    const part = parts[k];
    if (node === null || typeof node !== 'object') throw new ModelPathError(`${path}: '${parts.slice(0, k).join('.')}' is not an object or a list`);
    const value = (node as Record<string | number, unknown>)[part];
    if (value === undefined) {
      if (k === parts.length - 1 && defaultsToZero(parts)) return 0;
      throw new ModelPathError(`${path}: the model has no '${parts.slice(0, k + 1).join('.')}'`);
    }
    node = value;
  }
  if (typeof node !== 'number' || !Number.isFinite(node)) throw new ModelPathError(`${path}: the value there is not a number`);
  return node;
}

/** A deep copy of `doc` with the number at `path` replaced by `value` (checked as numberAtPath). */
export function withNumberAtPath<T>(doc: T, path: string, value: number): T {
  numberAtPath(doc, path);
  if (!Number.isFinite(value)) throw new ModelPathError(`${path}: ${value} is not a finite number`);
  const copy = structuredClone(doc);
  const parts = pathParts(path);
  let node = copy as unknown as Record<string | number, unknown>;
  for (let k = 0; k < parts.length - 1; k++) node = node[parts[k]] as Record<string | number, unknown>;
  node[parts[parts.length - 1]] = value;
  return copy;
}

function defaultsToZero(parts: (string | number)[]): boolean {
  if (parts.length === 1 && parts[0] === 'field') return true;
  return parts.length === 3 && parts[0] === 'leads' && typeof parts[1] === 'number' && parts[2] === 'offset';
}
