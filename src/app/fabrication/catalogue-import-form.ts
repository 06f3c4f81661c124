import { ChangeDetectionStrategy, Component, inject, signal } from '@angular/core';
import { MatButtonModule } from '@angular/material/button';
import { MatIconModule } from '@angular/material/icon';
import type { CatalogueImportResult } from '../../../shared/api/fabrication';
import { ErrorReport } from '../core/errors/error-report';
import { CurrentGroup } from '../core/group/current-group';
import { FabricationApi } from '../core/fabrication/fabrication-api';

/** For a group's admin: import a catalogue JSON export of another group; a bad file is refused whole. */
@Component({
  selector: 'pw-catalogue-import-form',
  changeDetection: ChangeDetectionStrategy.OnPush,
  imports: [MatButtonModule, MatIconModule],
  template: `
    <section class="import">
      <h2>Import resonances from another group</h2>
      <p class="muted">
        A catalogue export (JSON, from the Catalogue page of another group) with its models. The file is checked whole: if anything in it is invalid, nothing is
        imported. Imported resonances keep their figures and record where they came from.
      </p>
      <input #file type="file" accept="application/json,.json" hidden (change)="pick(file.files?.[0] ?? null); file.value = ''" />
      <button mat-stroked-button type="button" (click)="file.click()" [disabled]="busy()" data-test="import-catalogue">
        <mat-icon>upload_file</mat-icon> Choose a JSON export…
      </button>
      @if (result(); as r) {
        <p role="status">Imported {{ r.imported }} resonances and {{ r.models }} models.</p>
      }
    </section>
  `,
  styles: `
    .import {
      margin-top: 24px;
    }
    .muted {
      color: var(--mat-sys-on-surface-variant);
    }
    h2 {
      font: var(--mat-sys-title-large);
    }
  `,
})
export class CatalogueImportForm {
  private readonly api = inject(FabricationApi);
  private readonly errors = inject(ErrorReport);
  private readonly group = inject(CurrentGroup);
  protected readonly busy = signal(false);
  protected readonly result = signal<CatalogueImportResult | null>(null);

  protected pick(file: File | null): void {
    const gid = this.group.id();
    if (!file || !gid) return;
    this.busy.set(true);
    this.result.set(null);
    this.api.importCatalogue(gid, file).subscribe({
      next: (r) => {
        this.busy.set(false);
        this.result.set(r);
      },
      error: (err: unknown) => {
        this.busy.set(false);
        this.errors.show(err);
      },
    });
  }
}
