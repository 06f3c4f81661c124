import type { AbstractControl, FormGroup } from '@angular/forms';

/** One problem with a model document, its field path written "leads.1.start". */
export interface PlacedIssue {
  path: string;
  message: string;
}

/** ['leads', 1, 'start'] → 'leads.1.start', the form the API uses for issue paths. */
export function dottedPath(path: readonly (string | number)[]): string {
  return path.map(String).join('.');
}

/**
 * Puts each issue on the form control at its path (as the `server` error, which the
 * field shows under itself) and returns the rest keyed by the nearest ancestor
 * section that the editor shows messages for, e.g. 'shape' or 'leads.1'.
 */
export function placeIssues(form: FormGroup, issues: readonly PlacedIssue[], sections: readonly string[]): Map<string, string[]> {
  const rest = new Map<string, string[]>();
  for (const raw of issues) {
    // The API may name the request body's field ("document.leads.1"); the form mirrors the document itself.
    const issue = { ...raw, path: raw.path.replace(/^document(\.|$)/, '') };
    const control = leafControl(form, issue.path);
    if (control) {
      control.setErrors({ ...(control.errors ?? {}), server: issue.message });
      control.markAsTouched();
      continue;
    }
    const section = nearestSection(issue.path, sections);
    rest.set(section, [...(rest.get(section) ?? []), issue.message]);
  }
  return rest;
}

/** Clears the `server` errors an earlier placement put on the controls. */
export function clearPlacedIssues(control: AbstractControl): void {
  const children = (control as { controls?: Record<string, AbstractControl> | AbstractControl[] }).controls;
  if (children) for (const child of Object.values(children)) clearPlacedIssues(child);
  const errors = control.errors;
  if (errors && 'server' in errors) {
    const { server: _server, ...others } = errors;
    control.setErrors(Object.keys(others).length ? others : null);
  }
}

/** A control at exactly this path that shows its own errors (not a group or array). */
function leafControl(form: FormGroup, path: string): AbstractControl | null {
  const control = path ? form.get(path) : null;
  if (!control || 'controls' in control) return null;
  return control;
}

/** The longest listed section that is a prefix of the path; '' (the whole document) otherwise. */
function nearestSection(path: string, sections: readonly string[]): string {
  const parts = path.split('.');
  for (let n = parts.length; n > 0; n--) {
    const candidate = parts.slice(0, n).join('.');
    if (sections.includes(candidate)) return candidate;
  }
  return '';
}
