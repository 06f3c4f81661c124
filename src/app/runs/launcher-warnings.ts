/**
 * The launcher's warnings, each said once: the estimate repeats the model-validity
 * warnings the launcher already computes itself (at E max, from the lowest lead
 * offset; on the honeycomb at the window's end farthest from the Dirac point, `where`),
 * so the estimate's copies, the same sentence give or take the numbers, are dropped and
 * the launcher's own kept.
 */
export function launcherWarnings(estimate: readonly string[], validity: readonly string[], where = 'E max'): { text: string; validity: boolean }[] {
  const shape = (w: string) => w.replace(/-?\d+(\.\d+)?(e[+-]?\d+)?/gi, '#');
  const own = new Set(validity.map(shape));
  const out = [
    ...validity.map((text) => ({ text: `Model validity at ${where}: ${text}`, validity: true })),
    ...estimate.filter((w) => !own.has(shape(w))).map((text) => ({ text, validity: false })),
  ];
  const seen = new Set<string>();
  return out.filter((w) => (seen.has(w.text) ? false : (seen.add(w.text), true)));
}
