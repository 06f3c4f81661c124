import { ChangeDetectionStrategy, Component, computed, inject, signal } from '@angular/core';
import { dimensionsText } from '../core/format/dimensions-text';
import { takeUntilDestroyed, toObservable, toSignal } from '@angular/core/rxjs-interop';
import { FormControl, FormGroup, ReactiveFormsModule } from '@angular/forms';
import { MatButtonModule } from '@angular/material/button';
import { MatExpansionModule } from '@angular/material/expansion';
import { MatFormFieldModule } from '@angular/material/form-field';
import { MatIconModule } from '@angular/material/icon';
import { MatInputModule } from '@angular/material/input';
import { MatProgressBarModule } from '@angular/material/progress-bar';
import { MatSelectModule } from '@angular/material/select';
import { MatSortModule, type Sort } from '@angular/material/sort';
import { MatTableModule } from '@angular/material/table';
import { MatTooltipModule } from '@angular/material/tooltip';
import { ActivatedRoute, Router, RouterLink } from '@angular/router';
import { catchError, combineLatest, debounceTime, map, of, switchMap } from 'rxjs';
import { MATERIAL_PRESETS } from '../../../shared/model/materials';
import { toProblem } from '../core/errors/problem';
import { CurrentGroup } from '../core/group/current-group';
import { modelFamilies } from '../core/api/model-families';
import { CatalogueApi } from './catalogue-api';
import type { ResonanceRow } from '../../../shared/api/resonance-row';
import { countLabel } from './count-label';
import {
  type CatalogueFilter,
  type CatalogueView,
  type SortKey,
  dimensionKeys,
  emptyFilter,
  numericFields,
  queryToView,
  viewToQuery,
} from './catalogue-filter';
import { EnergyPipe, LifetimePipe, QualityPipe, WidthPipe } from '../core/format/energy-format';
import { MaterialLabelPipe } from '../core/format/material-label';
import type { CataloguePage } from '../../../shared/api/catalogue';

type FilterControls = { [K in keyof Omit<CatalogueFilter, 'tags'>]: FormControl<string> } & { tags: FormControl<string> };

/**
 * The group's resonance catalogue: a sortable, paged Material table with a filter
 * panel. The whole view (filter, sort, page cursor) lives in the URL query, so a search
 * can be shared as a link, and the same parameters go to the API and the exports.
 * Pages follow the API's keyset cursors (next, previous, first), which cost the same at
 * any depth; the total says whether it is exact, counted a while ago, or estimated, and
 * "Count exactly" asks the API to count now.
 */
@Component({
  selector: 'pw-catalogue-table',
  changeDetection: ChangeDetectionStrategy.OnPush,
  imports: [
    ReactiveFormsModule,
    RouterLink,
    MatButtonModule,
    MatExpansionModule,
    MatFormFieldModule,
    MatIconModule,
    MatInputModule,
    MatProgressBarModule,
    MatSelectModule,
    MatSortModule,
    MatTableModule,
    MatTooltipModule,
    EnergyPipe,
    WidthPipe,
    LifetimePipe,
    QualityPipe,
    MaterialLabelPipe,
  ],
  templateUrl: './catalogue-table.html',
  styleUrl: './catalogue-table.scss',
})
export class CatalogueTable {
  private readonly api = inject(CatalogueApi);
  private readonly route = inject(ActivatedRoute);
  private readonly router = inject(Router);
  protected readonly group = inject(CurrentGroup);
  protected readonly families = modelFamilies;
  protected readonly materials = MATERIAL_PRESETS;
  protected readonly dimensionKeys = dimensionKeys;
  /** Every row on the page a microwave resonance: the columns read f, Γ_f in their headers. */
  protected readonly allMicrowave = computed(() => {
    const items = this.page()?.items ?? [];
    return items.length > 0 && items.every((r) => r.physics === 'microwave');
  });
  /** Rows whose picture answered an error (imported rows have none in this group). */
  protected readonly missingPictures = signal<ReadonlySet<string>>(new Set());
  protected pictureMissing(id: string): void {
    this.missingPictures.update((s) => new Set(s).add(id));
  }
  protected readonly columns = ['thumbnail', 'energy', 'width', 'lifetime', 'quality', 'flags', 'validity', 'geometry', 'model', 'date', 'tags'];

  protected readonly form = new FormGroup<FilterControls>(
    Object.fromEntries(Object.keys(emptyFilter).map((k) => [k, new FormControl('', { nonNullable: true })])) as unknown as FilterControls,
  );

  protected readonly view = toSignal(this.route.queryParamMap.pipe(map((p) => queryToView(p))), {
    initialValue: queryToView(this.route.snapshot.queryParamMap),
  });
  protected readonly page = signal<CataloguePage | null>(null);
  protected readonly loading = signal(false);
  protected readonly error = signal<string | null>(null);
  protected readonly numberErrors = signal<string[]>([]);

  /** The API query of the current view: pageSize always, and the cursor or the page number (never both). */
  private readonly apiQuery = computed(() => {
    const v = this.view();
    const query: Record<string, string | string[]> = { ...viewToQuery(v), pageSize: String(v.pageSize) };
    if (!v.cursor) query['page'] = String(v.page);
    return query;
  });
  protected readonly counting = signal(false);
  protected readonly countText = computed(() => {
    const p = this.page();
    return p ? countLabel(p) : '';
  });
  protected readonly firstRow = computed(() => {
    const p = this.page();
    return p && p.items.length > 0 ? (p.page - 1) * p.pageSize + 1 : 0;
  });
  protected readonly pageSizes = [10, 25, 50, 100];
  protected readonly csvUrl = computed(() => this.exportUrl('csv'));
  protected readonly jsonUrl = computed(() => this.exportUrl('json'));

  constructor() {
    this.fillForm(this.view());
    this.route.queryParamMap.pipe(takeUntilDestroyed()).subscribe((p) => this.fillForm(queryToView(p)));

    // Typing changes the URL (debounced, replacing the history entry); the URL drives the request.
    this.form.valueChanges.pipe(debounceTime(350), takeUntilDestroyed()).subscribe(() => {
      const filter = this.readForm();
      const bad = numericFields.filter(({ key }) => {
        const v = String(filter[key]).trim();
        return v !== '' && !Number.isFinite(Number(v));
      });
      this.numberErrors.set(bad.map((f) => `${f.label} is not a number.`));
      if (bad.length) return;
      this.navigate({ ...this.view(), filter, page: 1, cursor: '' });
    });

    combineLatest([toObservable(this.apiQuery), toObservable(this.group.id)])
      .pipe(
        debounceTime(0),
        switchMap(([query, groupId]) => {
          if (!groupId) return of(null);
          this.loading.set(true);
          return this.api.list(groupId, query).pipe(
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
        this.page.set(answer);
      });
  }

  protected onSort(sort: Sort): void {
    this.navigate({ ...this.view(), sort: sort.direction ? (sort.active as SortKey) : '', dir: sort.direction, page: 1, cursor: '' });
  }

  protected nextPage(): void {
    const cursor = this.page()?.nextCursor;
    if (cursor) this.navigate({ ...this.view(), page: 1, cursor });
  }

  protected previousPage(): void {
    const cursor = this.page()?.prevCursor;
    if (cursor) this.navigate({ ...this.view(), page: 1, cursor });
  }

  protected firstPage(): void {
    this.navigate({ ...this.view(), page: 1, cursor: '' });
  }

  protected onPageSize(size: string): void {
    this.navigate({ ...this.view(), pageSize: Number(size), page: 1, cursor: '' });
  }

  /** Asks the API to count the matches now; only the total of the page shown changes. */
  protected countExactly(): void {
    const groupId = this.group.id();
    if (!groupId || this.counting()) return;
    this.counting.set(true);
    this.api.list(groupId, { ...this.apiQuery(), count: 'exact' }).subscribe({
      next: (answer) => {
        this.counting.set(false);
        const shown = this.page();
        if (shown) this.page.set({ ...shown, total: answer.total, totalKind: answer.totalKind, countedAt: answer.countedAt, countAgeSeconds: answer.countAgeSeconds });
      },
      error: (err: unknown) => {
        this.counting.set(false);
        this.error.set(toProblem(err).message);
      },
    });
  }

  protected clear(): void {
    this.navigate({ ...this.view(), filter: emptyFilter, page: 1, cursor: '' });
  }

  /** The dimensions of an electron row: lengths in nm, the area in nm². */
  protected dimensions(dims: Record<string, number>): string {
    return dimensionsText(dims, 'electrons');
  }

  /** The geometry line of a row in its own units: nm and T, or mm, ε_r and "field not applicable" for a microwave resonator. */
  protected geometryLine(r: ResonanceRow): string {
    if (r.physics !== 'microwave') return '';
    const eps = /^eps_r=(.*)$/.exec(r.material)?.[1];
    return [dimensionsText(r.keyDimensions, 'microwave'), `ε_r = ${eps ?? r.material}`, 'field not applicable'].filter(Boolean).join(' · ');
  }

  /** Sorts by the dimension chosen in the filter (sort=dim.NAME); again flips the direction. */
  protected sortByDimension(): void {
    const key = `dim.${this.form.controls.dimKey.value || 'width'}` as SortKey;
    const v = this.view();
    const dir = v.sort === key && v.dir === 'asc' ? 'desc' : 'asc';
    this.navigate({ ...v, sort: key, dir, page: 1, cursor: '' });
  }

  private navigate(view: CatalogueView): void {
    void this.router.navigate([], { relativeTo: this.route, queryParams: viewToQuery(view), replaceUrl: true });
  }

  private exportUrl(format: 'csv' | 'json'): string | null {
    const groupId = this.group.id();
    return groupId ? this.api.exportUrl(groupId, format, viewToQuery(this.view())) : null;
  }

  private readForm(): CatalogueFilter {
    const v = this.form.getRawValue();
    return {
      ...v,
      tags: v.tags
        .split(',')
        .map((t) => t.trim())
        .filter(Boolean),
    };
  }

  private fillForm(view: CatalogueView): void {
    const current = this.readForm();
    const next = { ...view.filter, tags: view.filter.tags.join(', ') };
    if (JSON.stringify({ ...current, tags: current.tags.join(', ') }) === JSON.stringify(next)) return;
    this.form.setValue(next, { emitEvent: false });
  }
}
