import { ChangeDetectionStrategy, Component, DestroyRef, computed, effect, inject, input, signal, untracked } from '@angular/core';
import { takeUntilDestroyed } from '@angular/core/rxjs-interop';
import { FormArray, FormControl, FormGroup, ReactiveFormsModule } from '@angular/forms';
import { MatButtonModule } from '@angular/material/button';
import { MatButtonToggleModule } from '@angular/material/button-toggle';
import { MatCardModule } from '@angular/material/card';
import { MatCheckboxModule } from '@angular/material/checkbox';
import { MatFormFieldModule } from '@angular/material/form-field';
import { MatIconModule } from '@angular/material/icon';
import { MatInputModule } from '@angular/material/input';
import { MatProgressBarModule } from '@angular/material/progress-bar';
import { MatSelectModule } from '@angular/material/select';
import { Router, RouterLink } from '@angular/router';
import { Subject, catchError, debounceTime, map, of, switchMap } from 'rxjs';
import type { StudyEstimate, StudyRequest } from '../../../shared/api/studies';
import { formatDuration } from '../core/format/energy-format';
import { ErrorReport } from '../core/errors/error-report';
import { fieldError } from '../core/errors/field-error';
import { toProblem } from '../core/errors/problem';
import { CurrentGroup } from '../core/group/current-group';
import { injectCanDesign } from '../core/group/design-permission';
import { ModelsApi } from '../core/api/models-api';
import { type ParameterPath, parameterPaths } from './parameter-paths';
import { expandValues, parseParameterValues } from './parameter-values';
import { StudiesApi } from './studies-api';
import { type StudyFormValue, studyRequest } from './study-request';
import type { ModelDetail, ModelSummary } from '../../../shared/api/models';

type JitterKind = 'dimension' | 'lead-width' | 'gate-offset';

function num(value: number | null = null): FormControl<number | null> {
  return new FormControl<number | null>(value);
}

/**
 * Launches a parameter study (one parameter path of the model, its values, the pole
 * window) or a tolerance ensemble (N realisations, roughness, jitters, the resonance to
 * follow, tolerances), showing the server's estimate for the whole study first.
 */
@Component({
  selector: 'pw-study-launcher',
  changeDetection: ChangeDetectionStrategy.OnPush,
  imports: [
    ReactiveFormsModule,
    RouterLink,
    MatButtonModule,
    MatButtonToggleModule,
    MatCardModule,
    MatCheckboxModule,
    MatFormFieldModule,
    MatIconModule,
    MatInputModule,
    MatProgressBarModule,
    MatSelectModule,
  ],
  templateUrl: './study-launcher.html',
  styleUrl: './study-launcher.scss',
})
export class StudyLauncher {
  /** ?kind=sweep|ensemble and ?modelId= from the URL. */
  readonly kind = input<string | undefined>(undefined);
  readonly modelId = input<string | undefined>(undefined);

  private readonly api = inject(StudiesApi);
  private readonly models = inject(ModelsApi);
  private readonly errors = inject(ErrorReport);
  private readonly router = inject(Router);
  private readonly destroyRef = inject(DestroyRef);
  protected readonly group = inject(CurrentGroup);
  protected readonly canDesign = injectCanDesign();
  protected readonly fieldError = fieldError;
  protected readonly formatDuration = formatDuration;

  protected readonly form = new FormGroup({
    kind: new FormControl<'sweep' | 'ensemble'>('sweep', { nonNullable: true }),
    modelId: new FormControl('', { nonNullable: true }),
    version: num(),
    name: new FormControl('', { nonNullable: true }),
    window: new FormGroup({ emin: num(1), emax: num(10), gammaMax: num(1) }),
    sweep: new FormGroup({
      path: new FormControl('', { nonNullable: true }),
      values: new FormControl('0:1:5', { nonNullable: true }),
    }),
    ensemble: new FormGroup({
      realisations: num(20),
      seed: num(1),
      rmsNm: num(2),
      correlationNm: num(20),
      disorder: new FormControl(false, { nonNullable: true }),
      follow: num(),
      jitter: new FormArray<FormGroup<{ kind: FormControl<JitterKind>; path: FormControl<string>; sigma: FormControl<number | null> }>>([]),
      tolerances: new FormGroup({
        energyMin: num(),
        energyMax: num(),
        widthMin: num(),
        widthMax: num(),
        qualityMin: num(),
        qualityMax: num(),
      }),
    }),
  });

  protected readonly modelChoices = signal<ModelSummary[]>([]);
  protected readonly model = signal<ModelDetail | null>(null);
  protected readonly paths = signal<ParameterPath[]>([]);
  protected readonly value = signal(this.form.getRawValue() as StudyFormValue);
  protected readonly estimate = signal<StudyEstimate | null>(null);
  protected readonly estimateError = signal<string | null>(null);
  protected readonly estimating = signal(false);
  protected readonly launching = signal(false);
  protected readonly formError = signal<string | null>(null);

  protected readonly currentValue = computed(() => {
    const path = this.value().sweep.path;
    return this.paths().find((p) => p.path === path)?.value ?? null;
  });
  /** What the values field stands for, or what is wrong with it. */
  protected readonly valuesNote = computed(() => {
    const parsed = parseParameterValues(this.value().sweep.values);
    if ('error' in parsed) return { error: parsed.error, text: null };
    const values = expandValues(parsed.values);
    const shown = values.slice(0, 6).map((x) => Number(x.toPrecision(4)));
    return { error: null, text: `${values.length} step(s): ${shown.join(', ')}${values.length > 6 ? ', …' : ''}` };
  });

  private readonly estimates = new Subject<StudyRequest | null>();

  constructor() {
    this.form.valueChanges.pipe(takeUntilDestroyed()).subscribe(() => {
      const v = this.form.getRawValue() as StudyFormValue;
      this.value.set(v);
      const built = studyRequest(v);
      this.estimates.next('request' in built ? built.request : null);
    });
    this.form.controls.modelId.valueChanges.pipe(takeUntilDestroyed()).subscribe((id) => this.loadModel(id));
    this.form.controls.version.valueChanges.pipe(takeUntilDestroyed()).subscribe((v) => this.loadVersion(v));

    this.estimates
      .pipe(
        debounceTime(400),
        switchMap((request) => {
          const groupId = this.group.id();
          if (!request || !groupId) return of(null);
          this.estimating.set(true);
          return this.api.estimate(groupId, request).pipe(
            map((e) => ({ ok: true as const, e })),
            catchError((err: unknown) => of({ ok: false as const, err })),
          );
        }),
        takeUntilDestroyed(),
      )
      .subscribe((answer) => {
        this.estimating.set(false);
        if (!answer) return this.estimate.set(null);
        if (answer.ok) {
          this.estimate.set(answer.e);
          this.estimateError.set(null);
        } else {
          this.estimate.set(null);
          this.estimateError.set(toProblem(answer.err).message);
        }
      });

    effect(() => {
      const groupId = this.group.id();
      if (!groupId) return;
      untracked(() =>
        this.models
          .list(groupId, { pageSize: 100 })
          .pipe(takeUntilDestroyed(this.destroyRef))
          .subscribe({ next: (r) => this.modelChoices.set(r.items), error: (err: unknown) => this.errors.show(err) }),
      );
    });
    effect(() => {
      const kind = this.kind();
      const id = this.modelId();
      untracked(() => {
        if (kind === 'sweep' || kind === 'ensemble') this.form.controls.kind.setValue(kind);
        if (id) this.form.controls.modelId.setValue(id);
      });
    });
  }

  protected get jitter() {
    return this.form.controls.ensemble.controls.jitter;
  }

  protected addJitter(): void {
    this.jitter.push(
      new FormGroup({
        kind: new FormControl<JitterKind>('dimension', { nonNullable: true }),
        path: new FormControl('', { nonNullable: true }),
        sigma: num(1),
      }),
    );
  }

  protected removeJitter(i: number): void {
    this.jitter.removeAt(i);
  }

  protected launch(): void {
    const groupId = this.group.id();
    if (!groupId || this.launching()) return;
    const built = studyRequest(this.form.getRawValue() as StudyFormValue);
    if ('error' in built) {
      this.formError.set(built.error);
      return;
    }
    this.formError.set(null);
    this.launching.set(true);
    this.api
      .create(groupId, built.request)
      .pipe(takeUntilDestroyed(this.destroyRef))
      .subscribe({
        next: (study) => {
          this.launching.set(false);
          void this.router.navigate(['/g', this.group.slug(), 'studies', study.id]);
        },
        error: (err: unknown) => {
          this.launching.set(false);
          const problem = toProblem(err);
          this.formError.set([problem.message, ...(problem.issues ?? []).map((i) => `${i.path}: ${i.message}`)].join(' '));
        },
      });
  }

  private loadModel(id: string): void {
    const groupId = this.group.id();
    if (!groupId || !id) return;
    this.models
      .model(groupId, id)
      .pipe(takeUntilDestroyed(this.destroyRef))
      .subscribe({
        next: (detail) => {
          this.model.set(detail);
          this.form.controls.version.setValue(detail.latestVersion, { emitEvent: false });
          this.setDocument(detail.document);
        },
        error: (err: unknown) => this.errors.show(err),
      });
  }

  private loadVersion(version: number | null): void {
    const groupId = this.group.id();
    const id = this.form.controls.modelId.value;
    if (!groupId || !id || version == null) return;
    this.models
      .version(groupId, id, version)
      .pipe(takeUntilDestroyed(this.destroyRef))
      .subscribe({ next: (v) => this.setDocument(v.document), error: (err: unknown) => this.errors.show(err) });
  }

  /** Offers the document's numbers as parameters; keeps the chosen path if the new document has it, else picks `field`. */
  private setDocument(document: unknown): void {
    const paths = parameterPaths(document);
    this.paths.set(paths);
    const path = this.form.controls.sweep.controls.path;
    if (!paths.some((p) => p.path === path.value)) path.setValue(paths.find((p) => p.path === 'field')?.path ?? paths[0]?.path ?? '');
    else this.form.updateValueAndValidity();
  }
}
