import { HttpErrorResponse } from '@angular/common/http';
import { ChangeDetectionStrategy, Component, DestroyRef, computed, effect, inject, input, signal, untracked } from '@angular/core';
import { takeUntilDestroyed } from '@angular/core/rxjs-interop';
import { ReactiveFormsModule } from '@angular/forms';
import { MatButtonModule } from '@angular/material/button';
import { MatButtonToggleModule } from '@angular/material/button-toggle';
import { MatCardModule } from '@angular/material/card';
import { MatCheckboxModule } from '@angular/material/checkbox';
import { MAT_FORM_FIELD_DEFAULT_OPTIONS, MatFormFieldModule } from '@angular/material/form-field';
import { MatIconModule } from '@angular/material/icon';
import { MatInputModule } from '@angular/material/input';
import { MatProgressBarModule } from '@angular/material/progress-bar';
import { MatSelectModule } from '@angular/material/select';
import { MatSnackBar } from '@angular/material/snack-bar';
import { MatTooltipModule } from '@angular/material/tooltip';
import { Router, RouterLink } from '@angular/router';
import { Subject, catchError, debounceTime, map, of, switchMap } from 'rxjs';
import { type CavityModelInput, MAX_GRID_POINTS, shapeSchema } from '../../../shared/model/cavity-model';
import { validateCavityModel } from '../../../shared/model/model-validation';
import { mouthSites, rasteriseShape } from '../../../shared/model/geometry';
import { type LatticeKind, placementOf, removeDanglingSites } from '../../../shared/model/lattice-geometry';
import { CurrentGroup } from '../core/group/current-group';
import { ErrorReport } from '../core/errors/error-report';
import { fieldError } from '../core/errors/field-error';
import { toProblem } from '../core/errors/problem';
import { formatEnergy } from '../core/format/energy-format';
import type { DerivedFiguresAnswer as DerivedFigures } from '../../../shared/api/models';
import type { ChannelThreshold } from '../../../shared/model/derived-figures';
import { injectCanDesign } from '../core/group/design-permission';
import { LatticePreview } from './lattice-preview';
import { countSites } from './lattice-mask-path';
import { issueInWords } from './issue-words';
import { addLeadStub } from './lead-stub';
import { ceilingGhz, twoDimensionalLimitWarning } from './two-dimensional-limit';
import { frequencyOfWavenumberSquared } from '../../../shared/units/microwave';
import { type LeadForm, customMaterial, fillForm, graphene, leadGroup, materialChoices, modelForm, readForm, starterModel } from './model-form';
import { switchLattice } from './lattice-switch';
import { type PlacedIssue, clearPlacedIssues, dottedPath, placeIssues } from '../core/errors/model-issues';
import { PotentialEditor } from './potential-editor';
import { ShapeEditor } from './shape-editor';
import { ModelsApi } from '../core/api/models-api';
import type { ModelDetail } from '../../../shared/api/models';

/** What the live drawing needs: the rasterised mask of the current form, or why there is none. */
interface Drawing {
  mask: Uint8Array | null;
  nx: number;
  ny: number;
  /** a, or a_CC on the honeycomb. */
  spacing: number;
  lattice: LatticeKind;
  sites: number;
  reason: string | null;
}

/**
 * Creates and edits a cavity model. Every change redraws the lattice at once (the
 * shared rasteriser runs in the browser) and, a moment later, asks the API for the
 * derived figures and validity warnings. Saving an existing model makes a new
 * version; the versions runs used stay immutable.
 */
@Component({
  selector: 'pw-model-editor',
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
    MatTooltipModule,
    LatticePreview,
    ShapeEditor,
    PotentialEditor,
  ],
  // Messages under a field take the room they need instead of running under the next row.
  providers: [{ provide: MAT_FORM_FIELD_DEFAULT_OPTIONS, useValue: { subscriptSizing: 'dynamic' } }],
  templateUrl: './model-editor.html',
  styleUrl: './model-editor.scss',
})
export class ModelEditor {
  /** Route parameter; absent for a new model. */
  readonly modelId = input<string | undefined>(undefined);

  private readonly api = inject(ModelsApi);
  private readonly group = inject(CurrentGroup);
  private readonly router = inject(Router);
  private readonly errors = inject(ErrorReport);
  private readonly snackBar = inject(MatSnackBar);
  private readonly destroyRef = inject(DestroyRef);

  protected readonly canDesign = injectCanDesign();
  protected readonly form = modelForm();
  protected readonly materialChoices = materialChoices;
  protected readonly customMaterial = customMaterial;
  protected readonly fieldError = fieldError;
  protected readonly formatEnergy = formatEnergy;
  protected readonly graphene = graphene;

  protected readonly detail = signal<ModelDetail | null>(null);
  protected readonly loading = signal(false);
  protected readonly saving = signal(false);
  protected readonly derived = signal<DerivedFigures | null>(null);
  protected readonly checking = signal(false);
  /** Issues no single field holds, by section ('shape', 'leads.1', '' for the document). */
  protected readonly sectionIssues = signal<Map<string, string[]>>(new Map());
  protected readonly document = signal<CavityModelInput>(starterModel);
  protected readonly value = signal(this.form.getRawValue());

  protected readonly drawing = computed<Drawing>(() => drawingOf(this.document()));
  protected readonly leadsForPreview = computed(() =>
    this.value().leads.map((l) => ({ side: l.side, start: l.start ?? 0, width: l.width ?? 0, offset: l.offset ?? 0, name: l.name })),
  );
  /** The grid's extent (nm): where new shapes and potential terms are placed. */
  protected readonly extent = computed(() => {
    const v = this.value();
    const p = placementOf(this.honeycomb() ? 'honeycomb' : 'square', v.spacing ?? 0);
    return { widthNm: (v.grid.nx ?? 0) * p.dx, heightNm: (v.grid.ny ?? 0) * p.dy };
  });
  /** Issues under the shape tree and the potential terms: their editors show each by its field. */
  protected readonly nestedIssues = signal<PlacedIssue[]>([]);
  /** 'form' or 'json': the JSON view shows the whole current document, for experts. */
  protected readonly view = signal<'form' | 'json'>('form');
  protected readonly jsonDraft = signal('');
  /** In the JSON view the field editors are hidden: their messages show under the text. */
  protected readonly nestedMessages = computed(() => [...this.nestedIssues().map((i) => i.message), ...[...this.sectionIssues().values()].flat()]);
  protected readonly jsonError = signal<string | null>(null);
  /** Per lead: what the last lead-stub click said when it could not add one. */
  protected readonly stubNotes = signal<Map<number, string>>(new Map());
  /** A flat microwave resonator: lengths in mm, ε_r and h shown; material, field, potential and lead offsets hidden. */
  protected readonly microwave = computed(() => this.value().physics === 'microwave');
  protected readonly lengthUnit = computed(() => (this.microwave() ? 'mm' : 'nm'));
  /** Graphene: the honeycomb lattice (electrons only), t, Δ and t' in eV, the spacing a_CC. */
  protected readonly honeycomb = computed(() => !this.microwave() && this.value().lattice.kind === 'honeycomb');
  /** A non-zero field offers the choice of a field in the leads. */
  protected readonly fieldOn = computed(() => !this.microwave() && (this.value().field ?? 0) !== 0);
  /** What the last lattice switch changed besides the lattice (starter, re-counted grid). */
  protected readonly latticeNote = signal<string | null>(null);
  protected readonly limitWarning = computed(() => {
    const d = this.derived();
    return d ? twoDimensionalLimitWarning(d) : null;
  });
  protected readonly ceilingGhz = ceilingGhz;
  protected readonly isCustomMaterial = computed(() => this.value().material === customMaterial);
  protected readonly groupSlug = computed(() => this.group.slug());
  protected readonly title = computed(() => {
    const d = this.detail();
    return d ? `${d.name} · version ${d.latestVersion}` : 'New cavity model';
  });

  private readonly serverCheck = new Subject<CavityModelInput>();

  constructor() {
    fillForm(this.form, starterModel);
    this.afterChange();

    this.form.valueChanges.pipe(takeUntilDestroyed()).subscribe(() => this.afterChange());

    // Live server check: only the latest document counts (switchMap drops stale answers).
    this.serverCheck
      .pipe(
        debounceTime(450),
        switchMap((doc) => {
          const groupId = this.group.id();
          if (!groupId) return of(null);
          this.checking.set(true);
          return this.api.validate(groupId, doc).pipe(
            map((r) => ({ ok: true as const, derived: r.derived })),
            catchError((err: unknown) => of({ ok: false as const, err })),
          );
        }),
        takeUntilDestroyed(),
      )
      .subscribe((answer) => {
        this.checking.set(false);
        if (!answer) return;
        if (answer.ok) {
          this.derived.set(answer.derived);
          return;
        }
        this.derived.set(null);
        const problem = toProblem(answer.err);
        if (problem.issues?.length) this.showIssues(problem.issues);
        else if (!(answer.err instanceof HttpErrorResponse && answer.err.status === 400)) {
          this.sectionIssues.set(new Map([['', [`The live check is unavailable: ${problem.message}`]]]));
        }
      });

    effect(() => {
      const id = this.modelId();
      untracked(() => this.load(id));
    });
  }

  protected get leads() {
    return this.form.controls.leads;
  }

  protected addLead(): void {
    const ny = this.value().grid.ny ?? 1;
    this.leads.push(leadGroup({ side: 'left', start: 0, width: Math.max(1, Math.floor(ny / 3)), offset: 0 }));
  }

  protected removeLead(index: number): void {
    this.leads.removeAt(index);
  }

  protected readonly Math = Math;

  protected setShape(shape: Record<string, unknown>): void {
    this.form.controls.shape.setValue(shape);
  }

  protected setPotential(terms: Record<string, unknown>[]): void {
    this.form.controls.potential.setValue(terms);
  }

  /** Adds the rectangle that joins lead k's mouth to the cavity (a union member). */
  protected addStub(k: number): void {
    const d = this.drawing();
    const lead = this.value().leads[k];
    const shape = shapeSchema.safeParse(this.document().shape);
    const notes = new Map(this.stubNotes());
    notes.delete(k);
    if (!shape.success || !d.mask || !lead || lead.start == null || lead.width == null) {
      notes.set(k, 'Complete the shape, the grid and this lead first.');
    } else {
      const result = addLeadStub(shape.data, { side: lead.side, start: lead.start, width: lead.width }, d.nx, d.ny, placementOf(d.lattice, d.spacing));
      if (result.ok) this.setShape(result.shape as unknown as Record<string, unknown>);
      else notes.set(k, `No stub added: ${result.reason}.`);
    }
    this.stubNotes.set(notes);
  }

  /** The user picked a lattice: the document follows (lattice-switch.ts), and a note says what else changed. */
  protected chooseLattice(kind: LatticeKind): void {
    const { document, note } = switchLattice(this.document(), kind, this.detail() !== null);
    fillForm(this.form, document);
    this.latticeNote.set(note);
  }

  /** A honeycomb lead's width counts zigzag chains (left/right leads) or dimer lines (top/bottom). */
  protected widthLabel(side: string): string {
    if (!this.honeycomb()) return 'Width (sites)';
    return side === 'left' || side === 'right' ? 'Width (zigzag chains)' : 'Width (dimer lines)';
  }

  /** t in eV with meV beside it, on the honeycomb (the document gives it in eV, the engine works in meV). */
  protected hoppingText(meV: number): string {
    return `${(meV / 1000).toPrecision(4)} eV (${formatEnergy(meV)})`;
  }

  protected showView(view: 'form' | 'json'): void {
    if (view === 'json') {
      this.jsonDraft.set(JSON.stringify(this.document(), null, 2));
      this.jsonError.set(null);
    }
    this.view.set(view);
  }

  /** Typing in the JSON view: the form follows whenever the text parses as an object. */
  protected editJson(text: string): void {
    this.jsonDraft.set(text);
    try {
      const parsed = JSON.parse(text) as unknown;
      if (!parsed || typeof parsed !== 'object' || Array.isArray(parsed)) {
        this.jsonError.set('The document must be one JSON object ({ … }).');
        return;
      }
      this.jsonError.set(null);
      fillForm(this.form, parsed as CavityModelInput);
    } catch (err) {
      this.jsonError.set(`Not valid JSON yet: ${err instanceof Error ? err.message : String(err)}`);
    }
  }

  /**
   * The opening energies ε_m − 2t of a lead's channels, the first few of them; for a microwave
   * resonator (ε_r given) the waveguide port's mode cut-offs as frequencies (GHz).
   */
  protected thresholdText(thresholds: readonly ChannelThreshold[], permittivity?: number): string {
    if (!thresholds?.length) return '—';
    const more = thresholds.length > 6 ? `, … (${thresholds.length} ${permittivity ? 'modes' : 'channels'})` : '';
    if (permittivity) {
      const shown = thresholds.slice(0, 6).map((th) => frequencyOfWavenumberSquared(th.opens, permittivity).toPrecision(4));
      return `${shown.join(', ')}${more} GHz`;
    }
    const shown = thresholds.slice(0, 6).map((th) => formatEnergy(th.opens, 4).replace(' meV', ''));
    return `${shown.join(', ')}${more} meV`;
  }

  protected issuesOf(section: string): string[] {
    return this.sectionIssues().get(section) ?? [];
  }

  protected leadError(lead: LeadForm, key: 'start' | 'width' | 'offset', label: string): string {
    return fieldError(lead.controls[key], label);
  }

  /** Upload of a drawn outline (PNG, black inside), turned into a bitmap shape by the API. */
  protected uploadOutline(event: Event): void {
    const file = (event.target as HTMLInputElement).files?.[0];
    const groupId = this.group.id();
    const v = this.form.getRawValue();
    if (!file || !groupId) return;
    const spacing = v.spacing ?? 0;
    const widthNm = (v.grid.nx ?? 0) * spacing;
    this.api
      .maskFromBitmap(groupId, file, spacing, widthNm)
      .pipe(takeUntilDestroyed(this.destroyRef))
      .subscribe({
        next: ({ shape }) => {
          this.setShape(shape as unknown as Record<string, unknown>);
          this.snackBar.open(`Outline read: ${shape.width} × ${shape.height} sites.`, 'OK', { duration: 4000 });
        },
        error: (err: unknown) => this.errors.show(err),
      });
    (event.target as HTMLInputElement).value = '';
  }

  protected save(): void {
    const groupId = this.group.id();
    if (!groupId || this.saving()) return;
    const { document, issues } = readForm(this.form);
    if (issues.length) {
      this.showIssues(issues);
      return;
    }
    const id = this.modelId();
    this.saving.set(true);
    const request = id ? this.api.update(groupId, id, document) : this.api.create(groupId, document);
    request.pipe(takeUntilDestroyed(this.destroyRef)).subscribe({
      next: (saved) => {
        this.saving.set(false);
        this.detail.set(saved);
        this.derived.set(saved.derived);
        this.snackBar.open(`Saved ${saved.name}, version ${saved.latestVersion}.`, 'OK', { duration: 4000 });
        if (!id) void this.router.navigate(['/g', this.group.slug(), 'models', saved.id]);
      },
      error: (err: unknown) => {
        this.saving.set(false);
        const problem = toProblem(err);
        if (problem.issues?.length) {
          this.showIssues(problem.issues);
          this.snackBar.open(`Not saved: ${problem.message}`, 'Dismiss', { duration: 8000 });
        } else this.errors.show(err);
      },
    });
  }

  private load(id: string | undefined): void {
    const groupId = this.group.id();
    if (!id || !groupId) return;
    this.loading.set(true);
    this.api
      .model(groupId, id)
      .pipe(takeUntilDestroyed(this.destroyRef))
      .subscribe({
        next: (detail) => {
          this.loading.set(false);
          this.detail.set(detail);
          this.derived.set(detail.derived);
          fillForm(this.form, detail.document);
          if (!this.canDesign()) this.form.disable({ emitEvent: false });
        },
        error: (err: unknown) => {
          this.loading.set(false);
          this.errors.show(err);
        },
      });
  }

  /** Redraws from the form at once; the derived figures follow from the server check. */
  private afterChange(): void {
    this.value.set(this.form.getRawValue());
    const { document, issues } = readForm(this.form);
    this.document.set(document);
    const local = validateCavityModel(document);
    const all: PlacedIssue[] = [...issues, ...(local.ok ? [] : local.issues.map((i) => ({ path: dottedPath(i.path), message: i.message })))];
    this.showIssues(all);
    if (this.stubNotes().size) this.stubNotes.set(new Map());
    // Viewers and reviewers cannot change the form; the loaded model already carries its figures.
    if (!issues.length && this.canDesign()) this.serverCheck.next(document);
  }

  /**
   * Every message in words naming its field; shape and potential issues go to their
   * editors, long ones (a lead mouth outside the cavity) to the line under their
   * section instead of under a narrow field, where they overflowed.
   */
  private showIssues(raw: readonly PlacedIssue[]): void {
    clearPlacedIssues(this.form);
    const doc = this.document();
    const issues = raw.map((i) => {
      const path = i.path.replace(/^document(\.|$)/, '');
      const parts = path ? path.split('.').map((p) => (/^\d+$/.test(p) ? Number(p) : p)) : [];
      return { path, message: issueInWords(parts, i.message, doc) };
    });
    const nested = issues.filter((i) => /^(shape|potential)\./.test(i.path));
    this.nestedIssues.set(nested);
    const sections = ['', 'grid', 'material', 'lattice', 'shape', 'leads', 'potential', ...this.leads.controls.map((_, k) => `leads.${k}`)];
    const placed: PlacedIssue[] = [];
    const long: PlacedIssue[] = [];
    for (const i of issues) {
      if (nested.includes(i)) continue;
      if (i.message.length > LONG_MESSAGE && this.form.get(i.path) && !('controls' in this.form.get(i.path)!)) {
        placed.push({ path: i.path, message: 'See the message below.' });
        long.push({ path: i.path.split('.').slice(0, -1).join('.'), message: i.message });
      } else placed.push(i);
    }
    const bySection = placeIssues(this.form, placed, sections);
    for (const i of long) {
      const section = sections.includes(i.path) ? i.path : '';
      bySection.set(section, [...(bySection.get(section) ?? []), i.message]);
    }
    this.sectionIssues.set(bySection);
  }
}

/** Messages longer than this do not fit under a form field; they go under the section. */
const LONG_MESSAGE = 70;

/** Rasterises the shape alone, so the drawing stays up while a lead is still wrong. */
function drawingOf(doc: CavityModelInput): Drawing {
  const nx = Number(doc.grid?.nx);
  const ny = Number(doc.grid?.ny);
  const spacing = Number(doc.spacing);
  const microwave = (doc.physics as { kind?: string } | undefined)?.kind === 'microwave';
  const lattice = (doc.lattice ?? {}) as { kind?: string; removeDangling?: boolean };
  const kind: LatticeKind = !microwave && lattice.kind === 'honeycomb' ? 'honeycomb' : 'square';
  const empty = (reason: string): Drawing => ({
    mask: null,
    nx: nx > 0 ? nx : 1,
    ny: ny > 0 ? ny : 1,
    spacing: spacing > 0 ? spacing : 1,
    lattice: kind,
    sites: 0,
    reason,
  });
  if (!Number.isInteger(nx) || !Number.isInteger(ny) || nx < 1 || ny < 1) return empty('The grid needs whole numbers of columns and rows.');
  if (nx * ny > MAX_GRID_POINTS) return empty(`The grid has ${nx * ny} points, above the cap of ${MAX_GRID_POINTS}.`);
  if (!(spacing > 0)) return empty('The lattice spacing must be positive.');
  const shape = shapeSchema.safeParse(doc.shape);
  if (!shape.success) return empty('The shape is incomplete; see the messages under it.');
  try {
    // The same sites the server counts (model-validation.ts): placed by the lattice, and on the
    // honeycomb with dangling atoms removed on request, lead mouth atoms kept.
    const placement = placementOf(kind, spacing);
    const mask = rasteriseShape(shape.data, nx, ny, spacing, placement);
    if (kind === 'honeycomb' && lattice.removeDangling) removeDanglingSites(mask, nx, ny, placement, mouthMask(doc.leads ?? [], nx, ny));
    return { mask, nx, ny, spacing, lattice: kind, sites: countSites(mask), reason: null };
  } catch (err) {
    return empty(err instanceof Error ? err.message : String(err));
  }
}

/** The lead mouth sites that fit on their edge: never removed as dangling (the lead is their missing neighbour). */
function mouthMask(leads: NonNullable<CavityModelInput['leads']>, nx: number, ny: number): Uint8Array {
  const keep = new Uint8Array(nx * ny);
  for (const lead of leads) {
    const start = Number(lead.start);
    const width = Number(lead.width);
    const along = lead.side === 'left' || lead.side === 'right' ? ny : nx;
    if (!Number.isInteger(start) || !Number.isInteger(width) || start < 0 || width < 1 || start + width > along) continue;
    const m = mouthSites({ side: lead.side, start, width }, nx, ny);
    for (let p = 0; p < m.i.length; p++) keep[m.i[p] * ny + m.j[p]] = 1;
  }
  return keep;
}
