import type { AbstractControl } from '@angular/forms';

/**
 * The message for one control's first error, in the words the form shows under the
 * field: the server's own text when it sent one, otherwise a plain sentence.
 */
export function fieldError(control: AbstractControl | null, label: string): string {
  const errors = control?.errors;
  if (!errors) return '';
  if (typeof errors['server'] === 'string') return errors['server'];
  if (errors['required']) return `${label} is required.`;
  if (errors['email']) return `${label} must be an e-mail address.`;
  if (errors['minlength']) return `${label} needs at least ${errors['minlength'].requiredLength} characters.`;
  if (errors['maxlength']) return `${label} allows at most ${errors['maxlength'].requiredLength} characters.`;
  if (errors['mismatch']) return 'The two passwords differ.';
  return `${label} is not valid.`;
}
