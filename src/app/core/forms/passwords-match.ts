import type { AbstractControl, ValidationErrors, ValidatorFn } from '@angular/forms';

/** Group validator: puts `mismatch` on the repeat field when it differs from the first. */
export function passwordsMatch(first: string, repeat: string): ValidatorFn {
  return (group: AbstractControl): ValidationErrors | null => {
    const a = group.get(first);
    const b = group.get(repeat);
    if (!a || !b) return null;
    const others = { ...(b.errors ?? {}) };
    delete others['mismatch'];
    if (b.value && a.value !== b.value) {
      b.setErrors({ ...others, mismatch: true });
      return { mismatch: true };
    }
    b.setErrors(Object.keys(others).length ? others : null);
    return null;
  };
}
