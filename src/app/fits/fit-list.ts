import { ChangeDetectionStrategy, Component, computed, effect, inject, signal, untracked } from '@angular/core';
import { FormsModule } from '@angular/forms';
import { MatButtonModule } from '@angular/material/button';
import { MatCardModule } from '@angular/material/card';
import { MatFormFieldModule } from '@angular/material/form-field';
import { MatIconModule } from '@angular/material/icon';
import { MatInputModule } from '@angular/material/input';
import { MatSelectModule } from '@angular/material/select';
import { Router, RouterLink } from '@angular/router';
import { ErrorReport } from '../core/errors/error-report';
import { CurrentGroup } from '../core/group/current-group';
import { significant } from '../core/format/energy-format';
import { FitsApi } from '../core/api/fits-api';
import type { FitListItem, TracePreview, TraceSummary } from '../../../shared/api/fits';
import { ModelsApi } from '../core/api/models-api';

const LINESHAPE_WORDS: Record<string, string> = { bw: 'Breit–Wigner', fano: 'Fano', thermal: 'thermal Breit–Wigner', 'thermal-fano': 'thermal Fano' };

/**
 * The Fits page: the group's peak fits and measured traces, and the upload of a new trace
 * (choose the file, see its columns, pick x and y with their units, the temperature and
 * the device's model).
 */
@Component({
  selector: 'pw-fit-list',
  changeDetection: ChangeDetectionStrategy.OnPush,
  imports: [FormsModule, RouterLink, MatButtonModule, MatCardModule, MatFormFieldModule, MatIconModule, MatInputModule, MatSelectModule],
  templateUrl: './fit-list.html',
  styleUrl: './fit-workspace.scss',
})
export class FitList {
  private readonly api = inject(FitsApi);
  private readonly modelsApi = inject(ModelsApi);
  private readonly errors = inject(ErrorReport);
  private readonly router = inject(Router);
  protected readonly group = inject(CurrentGroup);
  protected readonly significant = significant;
  protected readonly lineshapeWords = LINESHAPE_WORDS;

  protected readonly fits = signal<FitListItem[]>([]);
  protected readonly traces = signal<TraceSummary[]>([]);
  protected readonly models = signal<{ id: string; name: string }[]>([]);
  protected readonly preview = signal<TracePreview | null>(null);
  protected readonly problem = signal<string | null>(null);
  protected readonly uploading = signal(false);
  protected readonly canWrite = computed(() => ['admin', 'designer', 'reviewer'].includes(this.group.group()?.role ?? ''));
  private file: File | null = null;
  protected form = {
    deviceName: '',
    temperatureMK: '',
    notes: '',
    modelId: '',
    x: '',
    y: '',
    xUnit: 'meV',
    yUnit: 'T',
    leverArm: '',
    firstLine: '',
    lastLine: '',
  };

  constructor() {
    effect(() => {
      const groupId = this.group.id();
      if (!groupId) return;
      untracked(() => {
        this.api.fits(groupId).subscribe({ next: (f) => this.fits.set(f), error: (e) => this.errors.show(e) });
        this.api.traces(groupId).subscribe({ next: (t) => this.traces.set(t), error: (e) => this.errors.show(e) });
        this.modelsApi.list(groupId, { pageSize: 200 }).subscribe({ next: (m) => this.models.set(m.items), error: (e) => this.errors.show(e) });
      });
    });
  }

  protected chooseFile(event: Event) {
    const groupId = this.group.id();
    const file = (event.target as HTMLInputElement).files?.[0] ?? null;
    this.file = file;
    this.preview.set(null);
    this.problem.set(null);
    if (!file || !groupId) return;
    this.api.preview(groupId, file).subscribe({
      next: (p) => {
        this.preview.set(p);
        this.form.x = p.columns[0] ?? '';
        this.form.y = p.columns[p.columns.length - 1] ?? '';
        if (!this.form.deviceName) this.form.deviceName = file.name.replace(/\.[^.]+$/, '');
      },
      error: (err) => this.problem.set(err?.error?.message ?? 'The file could not be read.'),
    });
  }

  protected upload() {
    const groupId = this.group.id();
    if (!groupId || !this.file) return;
    this.uploading.set(true);
    this.problem.set(null);
    const fields = Object.fromEntries(Object.entries(this.form).filter(([, v]) => v !== ''));
    this.api.upload(groupId, this.file, fields).subscribe({
      next: (t) => {
        this.uploading.set(false);
        void this.router.navigate(['/g', this.group.slug(), 'fits', 'new'], { queryParams: { traceId: t.id } });
      },
      error: (err) => {
        this.uploading.set(false);
        const issues = (err?.error?.issues ?? []) as { path: string; message: string }[];
        this.problem.set(
          [err?.error?.message ?? 'The upload failed.', ...issues.filter((i) => i.path !== 'file').map((i) => `${i.path}: ${i.message}`)].join(' '),
        );
      },
    });
  }
}
