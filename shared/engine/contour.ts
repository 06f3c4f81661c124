/**
 * The rectangular contour of one piece of the pole window, as a closed chain of
 * straight panels, each carrying a q-point Gauss–Legendre rule. The same nodes
 * serve the contour integral (contour-eigenvalues.ts) and the argument-principle count
 * (argument-principle.ts), so every LU factorisation is used twice.
 *
 * Composite Gauss–Legendre is used rather than the trapezoidal rule because the
 * rectangle has corners: the integrand is analytic along each edge but not
 * periodic, and Gauss–Legendre panels converge geometrically on each panel
 * (rate set by the distance of the nearest pole or branch point to the panel,
 * Trefethen, "Is Gauss quadrature better than Clenshaw–Curtis?", SIAM Rev. 50 (2008)).
 */

/**
 * Gauss–Legendre points per panel. Five, with panels of about 1.5·Γmax, needed the
 * fewest LUs for a certified search on the bench cavities (8 and 6 took 10–30% more):
 * Newton polishes the candidates, so the quadrature only has to place them.
 */
export const PANEL_ORDER = 5;

/** What the search keeps about T(z) at one contour node (everything else is discarded). */
export interface ContourNode {
  zRe: number;
  zIm: number;
  /** log|det T(z)| and arg det T(z) ∈ (−π, π] from the LU. */
  logAbs: number;
  arg: number;
  /** Uᴴ T(z)⁻¹ V (ℓ×ℓ, row-major, interleaved re, im): the probed resolvent. */
  probed: Float64Array;
}

/**
 * A straight panel from a to b; nodes are filled in by the search (one LU each).
 * `branch` marks an end that sits on a square-root branch point (a channel
 * threshold on the real axis): the panel's rule is then Gauss–Legendre in
 * σ = sqrt(distance from that end), which integrates f = u(z) + sqrt(z − z_b)·v(z),
 * u and v analytic, as well as a plain panel integrates an analytic f, and never
 * puts a node on the branch point itself.
 */
export interface Panel {
  aRe: number;
  aIm: number;
  bRe: number;
  bIm: number;
  nodes: ContourNode[] | null;
  branch?: 'a' | 'b';
}

/** A panel used in a contour, traversed from a to b, or from b to a when reversed. */
export interface PanelRef {
  panel: Panel;
  reversed: boolean;
}

/** A closed contour: the rectangle [x0, x1] × [y0, y1], counter-clockwise. */
export interface Contour {
  x0: number;
  x1: number;
  y0: number;
  y1: number;
  refs: PanelRef[];
}

const GAUSS = gaussLegendre(PANEL_ORDER);

/** Gauss–Legendre nodes (ascending, on [−1, 1]) and weights of the panel rule. */
const gaussNodes: Float64Array = GAUSS.x;
const gaussWeights: Float64Array = GAUSS.w;

/**
 * A panel rule on [0, 1] in the panel's own parameter τ (z = a + (b − a)τ):
 * positions τ_k ascending and weights j_k, so that ∫_a^b f dz ≈ (b − a) Σ_k j_k f(z_k).
 */
interface PanelRule {
  tau: Float64Array;
  jac: Float64Array;
}

/** The square-root rule for a branch point at end a or b (the plain rule is gaussNodes/gaussWeights). */
function makeRule(branch: 'a' | 'b'): PanelRule {
  const tau = new Float64Array(PANEL_ORDER);
  const jac = new Float64Array(PANEL_ORDER);
  for (let k = 0; k < PANEL_ORDER; k++) {
    // τ = σ² from the branch end, σ = (1 + x)/2: dτ = 2σ dσ = σ·w (Gauss weight w on [−1, 1])
    const m = branch === 'a' ? k : PANEL_ORDER - 1 - k;
    const sigma = 0.5 * (1 + gaussNodes[m]);
    tau[k] = branch === 'a' ? sigma * sigma : 1 - sigma * sigma;
    jac[k] = sigma * gaussWeights[m];
  }
  return { tau, jac };
}

const RULES = { a: makeRule('a'), b: makeRule('b') };

function ruleOf(p: Panel): PanelRule {
  return p.branch === 'b' ? RULES.b : RULES.a;
}

/**
 * q-point Gauss–Legendre rule on [−1, 1] by Newton on the Legendre recurrence
 * (Abramowitz & Stegun 25.4.29; initial guesses cos(π(k − 1/4)/(q + 1/2))).
 * Cost O(q²) once at load.
 */
export function gaussLegendre(q: number): { x: Float64Array; w: Float64Array } {
  const x = new Float64Array(q);
  const w = new Float64Array(q);
  for (let k = 0; k < q; k++) {
    let r = Math.cos((Math.PI * (k + 0.75)) / (q + 0.5));
    let dp = 0;
    for (let it = 0; it < 100; it++) {
      let p0 = 1;
      let p1 = r;
      for (let m = 2; m <= q; m++) {
        const p2 = ((2 * m - 1) * r * p1 - (m - 1) * p0) / m;
        p0 = p1;
        p1 = p2;
      }
      dp = (q * (r * p1 - p0)) / (r * r - 1);
      const step = p1 / dp;
      r -= step;
      if (Math.abs(step) < 1e-16) break;
    }
    x[q - 1 - k] = r;
    w[q - 1 - k] = 2 / ((1 - r * r) * dp * dp);
  }
  return { x, w };
}

/** How to cut one edge of the rectangle into panels. */
interface EdgeGrading {
  /** Longest panel allowed (meV). */
  maxPanel: number;
  /**
   * When set, the edge passes a branch point at this distance (meV) on the real
   * axis: panels are graded geometrically (ratio 8) towards Im z = 0 so that each
   * panel is about as long as its distance to the branch point.
   */
  branchGap?: number;
  /**
   * When true, the edge runs through a branch point at Im z = 0 (the contour meets a
   * channel threshold): 0 is a panel break and the two panels that touch it use the
   * square-root rule at that end (Panel.branch).
   */
  branchOnEdge?: boolean;
}

/**
 * Builds the counter-clockwise rectangle [x0, x1] × [y0, y1] (bottom, right, top,
 * left edges) with fresh, unevaluated panels. `left` and `right` grade the two
 * vertical edges; `horizontal` sets the panel length of the bottom edge and, unless
 * `topEdge` is given, of the top edge.
 */
export function rectangleContour(
  x0: number,
  x1: number,
  y0: number,
  y1: number,
  horizontal: EdgeGrading,
  left: EdgeGrading,
  right: EdgeGrading,
  topEdge: EdgeGrading = horizontal,
): Contour {
  const refs: PanelRef[] = [];
  const bottom = uniformBreaks(x0, x1, horizontal.maxPanel);
  for (let k = 0; k + 1 < bottom.length; k++) refs.push(fresh(bottom[k], y0, bottom[k + 1], y0, false));
  refs.push(...verticalEdge(x1, y0, y1, right, false));
  const top = uniformBreaks(x0, x1, topEdge.maxPanel);
  for (let k = top.length - 1; k > 0; k--) refs.push(fresh(top[k], y1, top[k - 1], y1, false));
  refs.push(...verticalEdge(x0, y0, y1, left, true));
  return { x0, x1, y0, y1, refs };
}

/**
 * Panels of a vertical edge at x from y0 up to y1 (or down when `downward`).
 * Panels are stored bottom-to-top and referenced reversed when traversed downward,
 * so a cut shared by two contours can use the same panels in both directions.
 */
function verticalEdge(x: number, y0: number, y1: number, grading: EdgeGrading, downward: boolean): PanelRef[] {
  if (grading.branchOnEdge && y0 < 0 && y1 > 0) {
    const up: Panel[] = [];
    const below = uniformBreaks(y0, 0, grading.maxPanel);
    const above = uniformBreaks(0, y1, grading.maxPanel);
    for (let k = 0; k + 1 < below.length; k++) up.push(freshPanel(x, below[k], x, below[k + 1], k + 2 === below.length ? 'b' : undefined));
    for (let k = 0; k + 1 < above.length; k++) up.push(freshPanel(x, above[k], x, above[k + 1], k === 0 ? 'a' : undefined));
    return referenceVertical(up, downward);
  }
  const breaks = grading.branchGap !== undefined ? gradedBreaks(y0, y1, grading.branchGap, grading.maxPanel) : uniformBreaks(y0, y1, grading.maxPanel);
  const up: Panel[] = [];
  for (let k = 0; k + 1 < breaks.length; k++) up.push(freshPanel(x, breaks[k], x, breaks[k + 1]));
  return referenceVertical(up, downward);
}

/** References bottom-to-top panels either upward or downward. */
export function referenceVertical(up: Panel[], downward: boolean): PanelRef[] {
  if (!downward) return up.map((panel) => ({ panel, reversed: false }));
  return up
    .slice()
    .reverse()
    .map((panel) => ({ panel, reversed: true }));
}

/** Splits the panel of ref at its midpoint, returning the two halves in traversal order. */
export function splitRef(ref: PanelRef): [PanelRef, PanelRef] {
  const p = ref.panel;
  const mRe = 0.5 * (p.aRe + p.bRe);
  const mIm = 0.5 * (p.aIm + p.bIm);
  const first = freshPanel(p.aRe, p.aIm, mRe, mIm, p.branch === 'a' ? 'a' : undefined);
  const second = freshPanel(mRe, mIm, p.bRe, p.bIm, p.branch === 'b' ? 'b' : undefined);
  return ref.reversed
    ? [
        { panel: second, reversed: true },
        { panel: first, reversed: true },
      ]
    : [
        { panel: first, reversed: false },
        { panel: second, reversed: false },
      ];
}

/** Splits the panel of ref into k equal parts, returned in traversal order. */
export function splitRefInto(ref: PanelRef, k: number): PanelRef[] {
  const p = ref.panel;
  const parts: Panel[] = [];
  for (let m = 0; m < k; m++) {
    const u0 = m / k;
    const u1 = (m + 1) / k;
    parts.push(
      freshPanel(
        p.aRe + (p.bRe - p.aRe) * u0,
        p.aIm + (p.bIm - p.aIm) * u0,
        m + 1 === k ? p.bRe : p.aRe + (p.bRe - p.aRe) * u1,
        m + 1 === k ? p.bIm : p.aIm + (p.bIm - p.aIm) * u1,
        p.branch === 'a' && m === 0 ? 'a' : p.branch === 'b' && m + 1 === k ? 'b' : undefined,
      ),
    );
  }
  if (ref.reversed) parts.reverse();
  return parts.map((panel) => ({ panel, reversed: ref.reversed }));
}

/** The node positions z_k (interleaved) of a panel, in a→b order. */
export function panelPoints(p: Panel): Float64Array {
  const out = new Float64Array(2 * PANEL_ORDER);
  if (!p.branch) {
    const cRe = 0.5 * (p.aRe + p.bRe);
    const cIm = 0.5 * (p.aIm + p.bIm);
    const hRe = 0.5 * (p.bRe - p.aRe);
    const hIm = 0.5 * (p.bIm - p.aIm);
    for (let k = 0; k < PANEL_ORDER; k++) {
      out[2 * k] = cRe + hRe * gaussNodes[k];
      out[2 * k + 1] = cIm + hIm * gaussNodes[k];
    }
    return out;
  }
  const { tau } = ruleOf(p);
  for (let k = 0; k < PANEL_ORDER; k++) {
    out[2 * k] = p.aRe + (p.bRe - p.aRe) * tau[k];
    out[2 * k + 1] = p.aIm + (p.bIm - p.aIm) * tau[k];
  }
  return out;
}

/**
 * The quadrature weight dz_k of node k of a panel for ∮ f dz (complex, meV),
 * negated when the panel is traversed in reverse.
 */
export function panelWeight(ref: PanelRef, k: number): { re: number; im: number } {
  const p = ref.panel;
  if (!p.branch) {
    const s = ref.reversed ? -0.5 : 0.5;
    return { re: s * (p.bRe - p.aRe) * gaussWeights[k], im: s * (p.bIm - p.aIm) * gaussWeights[k] };
  }
  const j = (ref.reversed ? -1 : 1) * ruleOf(p).jac[k];
  return { re: j * (p.bRe - p.aRe), im: j * (p.bIm - p.aIm) };
}

/** Contour nodes in traversal order with their weights (all panels must be evaluated). */
export function* traverse(contour: Contour): Generator<{ node: ContourNode; wRe: number; wIm: number }> {
  for (const ref of contour.refs) {
    const nodes = ref.panel.nodes;
    if (!nodes) throw new Error('contour panel not evaluated');
    for (let kk = 0; kk < PANEL_ORDER; kk++) {
      const k = ref.reversed ? PANEL_ORDER - 1 - kk : kk;
      const w = panelWeight(ref, k);
      yield { node: nodes[k], wRe: w.re, wIm: w.im };
    }
  }
}

function fresh(aRe: number, aIm: number, bRe: number, bIm: number, reversed: boolean): PanelRef {
  return { panel: freshPanel(aRe, aIm, bRe, bIm), reversed };
}

function freshPanel(aRe: number, aIm: number, bRe: number, bIm: number, branch?: 'a' | 'b'): Panel {
  return branch ? { aRe, aIm, bRe, bIm, nodes: null, branch } : { aRe, aIm, bRe, bIm, nodes: null };
}

function uniformBreaks(a: number, b: number, maxPanel: number): number[] {
  const count = Math.max(1, Math.ceil((b - a) / maxPanel - 1e-9));
  const out: number[] = [];
  for (let k = 0; k <= count; k++) out.push(k === count ? b : a + ((b - a) * k) / count);
  return out;
}

/**
 * Breakpoints on [y0, y1] (y0 < 0 < y1) graded towards 0: ±gap, ±8·gap, ±64·gap, …
 * then uniform pieces no longer than maxPanel.
 */
function gradedBreaks(y0: number, y1: number, gap: number, maxPanel: number): number[] {
  const side = (end: number): number[] => {
    const len = Math.abs(end);
    const out: number[] = [];
    let y = gap;
    while (y < len && y <= maxPanel) {
      out.push(y);
      y *= 8;
    }
    const last = out.length ? out[out.length - 1] : 0;
    if (last < len) {
      const rest = uniformBreaks(last, len, maxPanel);
      for (let k = 1; k < rest.length; k++) out.push(rest[k]);
    }
    if (out.length === 0 || out[out.length - 1] < len) out.push(len);
    return out.map((v) => Math.sign(end) * v);
  };
  if (!(y0 < 0 && y1 > 0)) return uniformBreaks(y0, y1, maxPanel);
  const below = side(y0).reverse();
  const above = side(y1);
  return [...below, ...above].filter((v, k, all) => k === 0 || Math.abs(v - all[k - 1]) > 0);
}
