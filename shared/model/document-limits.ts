/**
 * Caps on the size of a cavity model document, checked before any geometry work:
 * a document within these limits rasterises in well under a second, whatever its
 * numbers. The structural caps are checked on the raw JSON without recursion, so a
 * shape tree nested 10,000 deep is refused with a 400 instead of overflowing the
 * stack of the schema check that follows.
 */
import type { ModelIssue } from './model-issue';

export const DOCUMENT_LIMITS = {
  /** Levels of union/subtract nesting in the shape tree (the top shape is level 1). */
  shapeDepth: 16,
  /** Members of one union, or shapes removed by one subtract. */
  shapeMembers: 64,
  /** Shapes in the whole tree, combinators included. */
  shapeNodes: 256,
  /** Vertices of one polygon. */
  polygonVertices: 4_096,
  /** Explicit [i, j] sites over every site-list shape of the document. */
  explicitSites: 100_000,
  /** Terms of the potential. */
  potentialTerms: 64,
  /** Explicit [i, j, V] entries over every site-potential term. */
  potentialSites: 250_000,
  /** Leads of one cavity. */
  leads: 16,
  /**
   * Largest |B| (T) of a model: far beyond any laboratory field (the lattice tests use up to
   * 3,000 T so that a wrong phase cannot hide), and small enough that every derived figure
   * (flux per plaquette, magnetic length, cyclotron energy) stays a finite number.
   */
  fieldTesla: 100_000,
  /**
   * Smallest lattice spacing (nm, or mm for a resonator): well below graphene's a_CC = 0.142 nm,
   * and large enough that t ∝ 1/a² stays a finite number.
   */
  smallestSpacing: 0.001,
  /**
   * Site tests of the rasterisation (geometry.ts rasterWork): the sites each primitive
   * scans, polygon rows × vertices, and one grid pass per shape and per merged member.
   * Measured at about 4 ns per site test here (180 grid-sized disks on a 500×500 grid:
   * 1.2·10⁸ tests in 0.46 s), so 5·10⁷ bounds a document's rasterisation near 0.2 s.
   */
  rasterWork: 50_000_000,
} as const;

type Path = (string | number)[];

function isObject(v: unknown): v is Record<string, unknown> {
  return typeof v === 'object' && v !== null && !Array.isArray(v);
}

/**
 * Checks the structural caps on a raw (unparsed) document. Returns the problems
 * found, each with its field path; an empty list means the schema check may run.
 * Iterative, cost O(shapes + list lengths), never descends past the depth cap.
 */
export function checkDocumentLimits(doc: unknown): ModelIssue[] {
  const issues: ModelIssue[] = [];
  if (!isObject(doc)) return issues; // the schema check says what is wrong with it
  const L = DOCUMENT_LIMITS;
  let nodes = 0;
  let explicitSites = 0;
  const stack: { node: unknown; path: Path; depth: number }[] = [{ node: doc['shape'], path: ['shape'], depth: 1 }];
  while (stack.length > 0) {
    const { node, path, depth } = stack.pop()!;
    if (!isObject(node)) continue;
    nodes++;
    if (nodes > L.shapeNodes) {
      issues.push({
        path: ['shape'],
        message: `the shape tree has more than ${L.shapeNodes} shapes, the limit; merge them (e.g. one polygon or one bitmap mask)`,
      });
      break;
    }
    const kind = node['kind'];
    if (kind === 'union' || kind === 'subtract') {
      if (depth >= L.shapeDepth) {
        issues.push({ path, message: `shapes are nested more than ${L.shapeDepth} levels deep here, the limit for union/subtract nesting; flatten the tree` });
        break;
      }
      const list = kind === 'union' ? node['of'] : node['remove'];
      const field = kind === 'union' ? 'of' : 'remove';
      if (Array.isArray(list)) {
        if (list.length > L.shapeMembers) {
          issues.push({ path: [...path, field], message: `${list.length} shapes in one ${kind}, above the limit of ${L.shapeMembers}` });
          continue;
        }
        for (let k = list.length - 1; k >= 0; k--) stack.push({ node: list[k], path: [...path, field, k], depth: depth + 1 });
      }
      if (kind === 'subtract') stack.push({ node: node['from'], path: [...path, 'from'], depth: depth + 1 });
    } else if (kind === 'polygon' && Array.isArray(node['vertices']) && node['vertices'].length > L.polygonVertices) {
      issues.push({
        path: [...path, 'vertices'],
        message: `the polygon has ${node['vertices'].length} vertices, above the limit of ${L.polygonVertices}; simplify the outline or use a bitmap mask`,
      });
    } else if (kind === 'sites' && Array.isArray(node['list'])) {
      explicitSites += node['list'].length;
      if (explicitSites > L.explicitSites) {
        issues.push({ path: [...path, 'list'], message: `more than ${L.explicitSites} explicit sites in the document, the limit; use a bitmap mask` });
        break;
      }
    }
  }

  const potential = doc['potential'];
  if (Array.isArray(potential)) {
    if (potential.length > L.potentialTerms) {
      issues.push({ path: ['potential'], message: `${potential.length} potential terms, above the limit of ${L.potentialTerms}` });
    } else {
      let entries = 0;
      potential.forEach((term, k) => {
        if (isObject(term) && Array.isArray(term['values'])) {
          entries += term['values'].length;
          if (entries > L.potentialSites && entries - term['values'].length <= L.potentialSites) {
            issues.push({ path: ['potential', k, 'values'], message: `more than ${L.potentialSites} explicit potential entries in the document, the limit` });
          }
        }
      });
    }
  }
  const leads = doc['leads'];
  if (Array.isArray(leads) && leads.length > L.leads) {
    issues.push({ path: ['leads'], message: `${leads.length} leads, above the limit of ${L.leads}` });
  }
  return issues;
}
