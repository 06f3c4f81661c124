import { Injectable, inject } from '@angular/core';
import type { AbstractControl, FormGroup } from '@angular/forms';
import { MatSnackBar } from '@angular/material/snack-bar';
import { type Problem, toProblem } from './problem';

/**
 * The one place that shows API failures: field issues go next to the matching form
 * control (as the `server` error), everything else becomes a snackbar.
 */
@Injectable({ providedIn: 'root' })
export class ErrorReport {
  private readonly snackBar = inject(MatSnackBar);

  /** Shows the failure as a snackbar and returns it, for pages that also keep it inline. */
  show(err: unknown): Problem {
    const problem = toProblem(err);
    this.snackBar.open(problem.message, 'Dismiss', { duration: 8000, politeness: 'assertive' });
    return problem;
  }

  /**
   * Puts field issues on the form's controls; shows a snackbar only for what no
   * control can hold, so the user is not told the same thing twice.
   */
  showOnForm(err: unknown, form: FormGroup): Problem {
    const problem = toProblem(err);
    const unplaced: string[] = [];
    for (const issue of problem.issues ?? []) {
      const control = findControl(form, issue.path);
      if (control) {
        control.setErrors({ ...(control.errors ?? {}), server: issue.message });
        control.markAsTouched();
      } else unplaced.push(issue.message);
    }
    if (!problem.issues?.length || unplaced.length) {
      const message = problem.issues?.length ? unplaced.join(' ') : problem.message;
      this.snackBar.open(message, 'Dismiss', { duration: 8000, politeness: 'assertive' });
    }
    return problem;
  }
}

/** "email" or "body.email" both name the control "email". */
function findControl(form: FormGroup, path: string): AbstractControl | null {
  const direct = form.get(path);
  if (direct) return direct;
  const parts = path.split('.');
  return parts.length > 1 ? form.get(parts.slice(1).join('.')) : null;
}
