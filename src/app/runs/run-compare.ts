import { ChangeDetectionStrategy, Component, DestroyRef, computed, effect, inject, input, signal, untracked } from '@angular/core';
import { takeUntilDestroyed } from '@angular/core/rxjs-interop';
import { MatButtonToggleModule } from '@angular/material/button-toggle';
import { MatCardModule } from '@angular/material/card';
import { MatIconModule } from '@angular/material/icon';
import { MatProgressBarModule } from '@angular/material/progress-bar';
import { RouterLink } from '@angular/router';
import { NgxEchartsDirective } from 'ngx-echarts';
import { forkJoin, map, of, switchMap } from 'rxjs';
import { EnergyPipe, WidthPipe } from '../core/format/energy-format';
import { ErrorReport } from '../core/errors/error-report';
import { CurrentGroup } from '../core/group/current-group';
import { ModelsApi } from '../core/api/models-api';
import { chartColours } from '../core/charts/chart-colours';
import { type ComparedRun, overlayPolesOptions, overlaySpectraOptions } from './compare-options';
import { documentDiff } from './document-diff';
import { matchPoles } from './pole-matching';
import { durationText } from './progress-times';
import { kindLabel, windowText } from './run-labels';
import { RunsApi } from './runs-api';
import type { RunDetail } from '../../../shared/api/runs';
import { frequencyPole, frequencySpectrum } from './microwave-view';
import { frequencyWindow, frequencyWindowText } from '../core/format/window-text';
import { aboveLimitMeaning, microwaveCells, validitySummary } from './pole-validity';
import type { ResonanceRow } from '../../../shared/api/resonance-row';

/** A run's poles in its own units: as they are (meV), or as Re f and Γ_f (GHz) for a microwave run. */
function ownUnits(run: RunDetail): ResonanceRow[] {
  const eps = run.microwave?.permittivity;
  return eps ? run.poles.map((p) => frequencyPole(p, eps)) : run.poles;
}

/** The energy (or, for microwave runs, frequency) range both runs searched; null when they share none or a window is missing. */
function sharedRange(a: RunDetail, b: RunDetail, microwave: boolean): { emin: number; emax: number } | null {
  const range = (run: RunDetail) => {
    const w = microwave ? frequencyWindow(run.window, run.microwave!.permittivity) : run.window;
    return w['emin'] != null && w['emax'] != null ? { emin: w['emin'], emax: w['emax'] } : null;
  };
  const ra = range(a);
  const rb = range(b);
  if (!ra || !rb) return null;
  return { emin: Math.max(ra.emin, rb.emin), emax: Math.min(ra.emax, rb.emax) };
}

interface Side {
  label: string;
  run: RunDetail | null;
  document: unknown;
  title: string;
}

/**
 * Two runs (?a=&b=) or two versions of a model (?model=&va=&vb=) side by side:
 * their poles and spectra overlaid, the poles matched by nearest pole with ΔE and
 * ΔΓ, and the diff of the two model documents.
 */
@Component({
  selector: 'pw-run-compare',
  changeDetection: ChangeDetectionStrategy.OnPush,
  imports: [RouterLink, MatButtonToggleModule, MatCardModule, MatIconModule, MatProgressBarModule, NgxEchartsDirective, EnergyPipe, WidthPipe],
  templateUrl: './run-compare.html',
  styleUrl: './run-compare.scss',
})
export class RunCompare {
  readonly a = input<string | undefined>(undefined);
  readonly b = input<string | undefined>(undefined);
  readonly model = input<string | undefined>(undefined);
  readonly va = input<string | undefined>(undefined);
  readonly vb = input<string | undefined>(undefined);

  private readonly runs = inject(RunsApi);
  private readonly models = inject(ModelsApi);
  private readonly errors = inject(ErrorReport);
  private readonly destroyRef = inject(DestroyRef);
  protected readonly group = inject(CurrentGroup);
  protected readonly kindLabel = kindLabel;
  protected readonly aboveLimitMeaning = aboveLimitMeaning;
  protected readonly microwaveCells = microwaveCells;
  protected readonly validitySummary = validitySummary;
  /** Both runs of a microwave model: frequencies (GHz, MHz) and Q instead of E and Γ. */
  protected readonly microwave = computed(() => {
    const s = this.sides();
    return !!s && s.every((side) => !!side.run?.microwave);
  });

  protected readonly sides = signal<[Side, Side] | null>(null);
  protected readonly failed = signal<string | null>(null);
  protected readonly poleView = signal<'width' | 'plane'>('width');

  protected readonly compared = computed<[ComparedRun, ComparedRun] | null>(() => {
    const s = this.sides();
    if (!s || !s[0].run || !s[1].run) return null;
    const mw = this.microwave();
    return s.map((side) => {
      const run = side.run!;
      const eps = mw ? run.microwave!.permittivity : null;
      return {
        label: side.label,
        poles: mw ? ownUnits(run) : run.poles,
        spectrum: eps && run.spectrum ? frequencySpectrum(run.spectrum, eps) : run.spectrum,
        leadNames: run.leads?.map((l) => l.name) ?? [],
        unit: mw ? 'GHz' : 'meV',
      };
    }) as unknown as [ComparedRun, ComparedRun];
  });
  protected readonly polesOptions = computed(() => {
    const c = this.compared();
    return c ? overlayPolesOptions(c[0], c[1], chartColours(), this.poleView()) : null;
  });
  protected readonly spectraOptions = computed(() => {
    const c = this.compared();
    return c && (c[0].spectrum || c[1].spectrum) ? overlaySpectraOptions(c[0], c[1], chartColours()) : null;
  });
  protected readonly matched = computed(() => {
    const s = this.sides();
    if (!s?.[0].run || !s[1].run) return [];
    // Matched where they are drawn: in the frequency plane for two microwave runs; only
    // inside the energy range both searched (a pole outside it has no partner to find).
    const shared = sharedRange(s[0].run, s[1].run, this.microwave());
    return this.microwave()
      ? matchPoles(ownUnits(s[0].run), ownUnits(s[1].run), Infinity, shared)
      : matchPoles(s[0].run.poles, s[1].run.poles, Infinity, shared);
  });
  protected readonly diff = computed(() => {
    const s = this.sides();
    return s ? documentDiff(s[0].document, s[1].document) : null;
  });

  constructor() {
    effect(() => {
      const ids = { a: this.a(), b: this.b(), model: this.model(), va: this.va(), vb: this.vb() };
      untracked(() => this.load(ids));
    });
  }

  /** Why a row has no partner: the other run never searched there, or it found nothing near. */
  protected lone(m: { a: unknown; outside: boolean }): string {
    if (!m.outside) return 'no partner';
    return m.a ? "outside B's window" : "outside A's window";
  }

  protected windowOf(run: RunDetail): string {
    return run.microwave ? frequencyWindowText(run.window, run.microwave.permittivity) : windowText(run.window);
  }

  /** A frequency difference (GHz) in MHz, signed. */
  protected mhz(ghz: number): string {
    return `${ghz >= 0 ? '+' : ''}${(ghz * 1e3).toPrecision(4)} MHz`;
  }

  protected durationOf(run: RunDetail): string {
    return run.startedAt && run.finishedAt ? durationText((Date.parse(run.finishedAt) - Date.parse(run.startedAt)) / 1000) : '—';
  }

  private load(ids: { a?: string; b?: string; model?: string; va?: string; vb?: string }): void {
    const groupId = this.group.id();
    if (!groupId) return;
    this.sides.set(null);
    this.failed.set(null);
    const done = {
      next: (s: [Side, Side]) => this.sides.set(s),
      error: (err: unknown) => this.failed.set(this.errors.show(err).message),
    };
    if (ids.a && ids.b) {
      const side = (id: string, label: string) =>
        this.runs
          .run(groupId, id)
          .pipe(
            switchMap((run) =>
              this.models
                .version(groupId, run.modelId, run.modelVersion)
                .pipe(map((v): Side => ({ label, run, document: v.document, title: `${run.modelName} v${run.modelVersion}` }))),
            ),
          );
      forkJoin([side(ids.a, 'A'), side(ids.b, 'B')])
        .pipe(takeUntilDestroyed(this.destroyRef))
        .subscribe(done);
    } else if (ids.model && ids.va && ids.vb) {
      const side = (v: number, label: string) =>
        this.models.version(groupId, ids.model!, v).pipe(map((mv): Side => ({ label, run: null, document: mv.document, title: `version ${v}` })));
      forkJoin([side(Number(ids.va), 'A'), side(Number(ids.vb), 'B')])
        .pipe(takeUntilDestroyed(this.destroyRef))
        .subscribe(done);
    } else {
      of(null).subscribe(() => this.failed.set('Pick two runs in the run list (or two versions of a model) to compare them.'));
    }
  }
}
