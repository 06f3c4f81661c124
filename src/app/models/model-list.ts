import { ChangeDetectionStrategy, Component, computed, inject, signal } from '@angular/core';
import { dimensionsText } from '../core/format/dimensions-text';
import { takeUntilDestroyed, toObservable } from '@angular/core/rxjs-interop';
import { FormControl, ReactiveFormsModule } from '@angular/forms';
import { MatButtonModule } from '@angular/material/button';
import { MatFormFieldModule } from '@angular/material/form-field';
import { MatIconModule } from '@angular/material/icon';
import { MatInputModule } from '@angular/material/input';
import { MatPaginatorModule, type PageEvent } from '@angular/material/paginator';
import { MatProgressBarModule } from '@angular/material/progress-bar';
import { MatSelectModule } from '@angular/material/select';
import { MatTableModule } from '@angular/material/table';
import { RouterLink } from '@angular/router';
import { catchError, combineLatest, debounceTime, distinctUntilChanged, of, startWith, switchMap, tap } from 'rxjs';
import { CurrentGroup } from '../core/group/current-group';
import { toProblem } from '../core/errors/problem';
import { MaterialLabelPipe } from '../core/format/material-label';
import { injectCanDesign } from '../core/group/design-permission';
import { modelFamilies } from '../core/api/model-families';
import { ModelsApi } from '../core/api/models-api';
import type { ModelSummary } from '../../../shared/api/models';

/** The group's cavity models, searchable by name and filtered by geometry family. */
@Component({
  selector: 'pw-model-list',
  changeDetection: ChangeDetectionStrategy.OnPush,
  imports: [
    ReactiveFormsModule,
    RouterLink,
    MatButtonModule,
    MatFormFieldModule,
    MatIconModule,
    MatInputModule,
    MatPaginatorModule,
    MatProgressBarModule,
    MatSelectModule,
    MatTableModule,
    MaterialLabelPipe,
  ],
  template: `
    <header class="page-head">
      <h1>Cavity models</h1>
      <span class="spacer"></span>
      @if (canDesign()) {
        <a mat-flat-button [routerLink]="['/g', group.slug(), 'models', 'new']" data-test="new-model"><mat-icon>add</mat-icon> New model</a>
      }
    </header>
    <div class="filters">
      <mat-form-field>
        <mat-label>Search by name</mat-label>
        <input matInput [formControl]="search" />
        <mat-icon matSuffix>search</mat-icon>
      </mat-form-field>
      <mat-form-field>
        <mat-label>Geometry family</mat-label>
        <mat-select [formControl]="family">
          <mat-option value="">Any</mat-option>
          @for (f of families; track f) {
            <mat-option [value]="f">{{ f }}</mat-option>
          }
        </mat-select>
      </mat-form-field>
    </div>
    @if (loading()) {
      <mat-progress-bar mode="indeterminate" />
    }
    @if (error(); as e) {
      <p class="issue" role="alert">{{ e }}</p>
    }
    <table mat-table [dataSource]="items()">
      <ng-container matColumnDef="name">
        <th mat-header-cell *matHeaderCellDef>Name</th>
        <td mat-cell *matCellDef="let m">
          <a [routerLink]="['/g', group.slug(), 'models', m.id]">{{ m.name }}</a>
        </td>
      </ng-container>
      <ng-container matColumnDef="family">
        <th mat-header-cell *matHeaderCellDef>Geometry</th>
        <td mat-cell *matCellDef="let m">{{ m.family }} {{ dimensions(m) }}</td>
      </ng-container>
      <ng-container matColumnDef="material">
        <th mat-header-cell *matHeaderCellDef>Material</th>
        <td mat-cell *matCellDef="let m">{{ m.material | materialLabel }}</td>
      </ng-container>
      <ng-container matColumnDef="lattice">
        <th mat-header-cell *matHeaderCellDef>Lattice</th>
        <td mat-cell *matCellDef="let m">a = {{ m.spacingNm }} nm · {{ m.siteCount }} sites · {{ m.leadCount }} leads</td>
      </ng-container>
      <ng-container matColumnDef="field">
        <th mat-header-cell *matHeaderCellDef>Field B</th>
        <td mat-cell *matCellDef="let m" class="num">{{ m.fieldT }} T</td>
      </ng-container>
      <ng-container matColumnDef="version">
        <th mat-header-cell *matHeaderCellDef>Version</th>
        <td mat-cell *matCellDef="let m">{{ m.latestVersion }}</td>
      </ng-container>
      <ng-container matColumnDef="updated">
        <th mat-header-cell *matHeaderCellDef>Updated</th>
        <td mat-cell *matCellDef="let m">{{ m.updatedAt.slice(0, 10) }} · {{ m.createdBy.name }}</td>
      </ng-container>
      <tr mat-header-row *matHeaderRowDef="columns"></tr>
      <tr mat-row *matRowDef="let row; columns: columns"></tr>
      <tr class="mat-row" *matNoDataRow>
        <td class="mat-cell empty" [attr.colspan]="columns.length">No models match.</td>
      </tr>
    </table>
    <mat-paginator [length]="total()" [pageSize]="pageSize()" [pageIndex]="page() - 1" [pageSizeOptions]="[10, 25, 50]" (page)="onPage($event)" />
  `,
  styles: `
    :host {
      display: block;
    }
    .page-head {
      display: flex;
      align-items: center;
    }
    .page-head h1 {
      font: var(--mat-sys-headline-small);
    }
    .spacer {
      flex: 1;
    }
    .filters {
      display: flex;
      gap: 12px;
      flex-wrap: wrap;
    }
    .issue {
      color: var(--mat-sys-error);
    }
    .empty {
      padding: 16px;
    }
    .num {
      white-space: nowrap;
    }
  `,
})
export class ModelList {
  private readonly api = inject(ModelsApi);
  protected readonly group = inject(CurrentGroup);
  protected readonly canDesign = injectCanDesign();
  protected readonly families = modelFamilies;
  protected readonly columns = ['name', 'family', 'material', 'lattice', 'field', 'version', 'updated'];

  protected readonly search = new FormControl('', { nonNullable: true });
  protected readonly family = new FormControl('', { nonNullable: true });
  protected readonly page = signal(1);
  protected readonly pageSize = signal(25);
  protected readonly items = signal<ModelSummary[]>([]);
  protected readonly total = signal(0);
  protected readonly loading = signal(false);
  protected readonly error = signal<string | null>(null);
  private readonly paging = computed(() => ({ page: this.page(), pageSize: this.pageSize() }));

  constructor() {
    combineLatest([
      this.search.valueChanges.pipe(
        startWith(''),
        debounceTime(300),
        distinctUntilChanged(),
        tap(() => this.page.set(1)),
      ),
      this.family.valueChanges.pipe(
        startWith(''),
        tap(() => this.page.set(1)),
      ),
      toObservable(this.paging),
      toObservable(this.group.id),
    ])
      .pipe(
        debounceTime(0),
        switchMap(([search, family, paging, groupId]) => {
          if (!groupId) return of(null);
          this.loading.set(true);
          return this.api.list(groupId, { search, family, ...paging }).pipe(
            catchError((err: unknown) => {
              this.error.set(toProblem(err).message);
              return of(null);
            }),
          );
        }),
        takeUntilDestroyed(),
      )
      .subscribe((answer) => {
        this.loading.set(false);
        if (!answer) return;
        this.error.set(null);
        this.items.set(answer.items);
        this.total.set(answer.total);
      });
  }

  protected onPage(e: PageEvent): void {
    this.pageSize.set(e.pageSize);
    this.page.set(e.pageIndex + 1);
  }

  protected dimensions(m: ModelSummary): string {
    const text = dimensionsText(m.keyDimensions, m.physics);
    return text ? `(${text})` : '';
  }
}
