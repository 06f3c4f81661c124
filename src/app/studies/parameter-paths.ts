/** One number of a model document that a study may vary. */
export interface ParameterPath {
  path: string;
  value: number;
}

/** Arrays longer than this are site data (masks, potentials on the grid), not design parameters. */
const longArray = 32;

/**
 * The dotted paths of every number in a model document (`field`, `potential.0.value`,
 * `leads.1.width`, …), in document order, for the study launcher's parameter choice.
 * Long numeric arrays (per-site data) are left out.
 */
export function parameterPaths(document: unknown): ParameterPath[] {
  const out: ParameterPath[] = [];
  const walk = (node: unknown, path: string): void => {
    if (typeof node === 'number' && Number.isFinite(node)) {
      if (path) out.push({ path, value: node });
      return;
    }
    if (Array.isArray(node)) {
      if (node.length > longArray) return;
      node.forEach((child, i) => walk(child, path ? `${path}.${i}` : String(i)));
      return;
    }
    if (node && typeof node === 'object') {
      for (const [key, child] of Object.entries(node)) {
        if (!/^[A-Za-z0-9_]+$/.test(key)) continue;
        walk(child, path ? `${path}.${key}` : key);
      }
    }
  };
  walk(document, '');
  return out;
}

/**
 * A parameter path with its unit where the path alone fixes it: the field is in tesla in
 * every model (docs/physics-model.md, "Units"). Other numbers keep their bare path, since
 * their unit depends on the model's mode (lengths in nm for electrons, mm for resonators).
 */
export function parameterLabel(path: string): string {
  return path === 'field' ? 'field (T)' : path;
}
