import { Component } from '@angular/core';
import { MatButtonModule } from '@angular/material/button';
import { RouterLink } from '@angular/router';

/** Unknown addresses and groups the user is not in look the same: nothing to see here. */
@Component({
  selector: 'pw-not-found',
  imports: [MatButtonModule, RouterLink],
  template: `
    <h1>Page not found</h1>
    <p>There is nothing at this address, or it belongs to a group you are not a member of.</p>
    <a mat-flat-button routerLink="/">Go to your dashboard</a>
  `,
  styles: `
    h1 {
      font: var(--mat-sys-headline-medium);
      margin: 0 0 16px;
    }
  `,
})
export class NotFound {}
