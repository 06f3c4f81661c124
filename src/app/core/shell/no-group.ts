import { Component } from '@angular/core';

/** A signed-in user whose last membership was removed has nowhere to go but here. */
@Component({
  selector: 'pw-no-group',
  template: `
    <h1>No group yet</h1>
    <p>Your account is not a member of any group. Ask an admin of your lab to invite you; the invitation arrives by e-mail.</p>
  `,
  styles: `
    h1 {
      font: var(--mat-sys-headline-medium);
      margin: 0 0 16px;
    }
  `,
})
export class NoGroup {}
