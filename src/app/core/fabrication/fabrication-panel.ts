import { DatePipe } from '@angular/common';
import { ChangeDetectionStrategy, Component, DestroyRef, computed, effect, inject, input, signal, untracked } from '@angular/core';
import { takeUntilDestroyed } from '@angular/core/rxjs-interop';
import { FormControl, FormGroup, ReactiveFormsModule } from '@angular/forms';
import { MatButtonModule } from '@angular/material/button';
import { MatCardModule } from '@angular/material/card';
import { MatFormFieldModule } from '@angular/material/form-field';
import { MatIconModule } from '@angular/material/icon';
import { MatInputModule } from '@angular/material/input';
import { MatSelectModule } from '@angular/material/select';
import { MatSnackBar } from '@angular/material/snack-bar';
import type { FabricationRecord, ResonanceComment } from '../../../../shared/api/fabrication';
import { transitionOf, type FabricationAction } from '../../../../shared/fabrication/fabrication-states';
import { ErrorReport } from '../errors/error-report';
import { CurrentGroup } from '../group/current-group';
import { formatEnergy, formatWidth, significant } from '../format/energy-format';
import { MembersApi } from '../api/members-api';
import { FitsApi } from '../api/fits-api';
import { FabricationApi, type TransitionRequest } from './fabrication-api';
import { STATE_ICONS, stateLabel } from './state-label';
import type { Member } from '../../../../shared/api/groups';

/** A number typed in a form field, or null when empty or not a number. */
function numberOf(text: string): number | null {
  if (text.trim() === '') return null;
  const v = Number(text);
  return Number.isFinite(v) ? v : null;
}

/**
 * The fabrication side of a resonance on its page: its state, the moves the signed-in
 * member may make from here (the server's transition table decides; the buttons only
 * mirror it), the downloads of an approved one, the measurement against the prediction,
 * its history, and the comments with mentions.
 */
@Component({
  selector: 'pw-fabrication-panel',
  changeDetection: ChangeDetectionStrategy.OnPush,
  imports: [DatePipe, ReactiveFormsModule, MatButtonModule, MatCardModule, MatFormFieldModule, MatIconModule, MatInputModule, MatSelectModule],
  templateUrl: './fabrication-panel.html',
  styleUrl: './fabrication-panel.scss',
})
export class FabricationPanel {
  readonly resonanceId = input.required<string>();

  private readonly api = inject(FabricationApi);
  private readonly membersApi = inject(MembersApi);
  private readonly fitsApi = inject(FitsApi);
  private readonly errors = inject(ErrorReport);
  private readonly snackBar = inject(MatSnackBar);
  private readonly destroyRef = inject(DestroyRef);
  protected readonly group = inject(CurrentGroup);
  protected readonly stateLabel = stateLabel;
  protected readonly stateIcons = STATE_ICONS;
  protected readonly formatEnergy = formatEnergy;
  protected readonly formatWidth = formatWidth;
  protected readonly significant = significant;

  protected readonly record = signal<FabricationRecord | null>(null);
  protected readonly comments = signal<ResonanceComment[]>([]);
  protected readonly members = signal<Member[]>([]);
  /** Peaks of the group's completed fits of measured traces, to take a measurement from. */
  protected readonly fitPeaks = signal<{ value: string; label: string }[]>([]);
  protected readonly busy = signal(false);
  protected readonly canComment = computed(() => ['admin', 'designer', 'reviewer'].includes(this.group.group()?.role ?? ''));
  protected readonly allowed = computed(() => new Set(this.record()?.allowedActions ?? []));
  protected readonly downloads = computed(() => {
    const r = this.record();
    const gid = this.group.id();
    if (!r || !gid || !r.state || !['approved', 'sent', 'measured'].includes(r.state)) return null;
    const base = `/api/groups/${gid}/resonances/${r.resonanceId}/fabrication`;
    return [
      { label: 'Package (ZIP)', href: `${base}/package.zip`, test: 'download-package' },
      { label: 'Spec sheet (PDF)', href: `${base}/spec.pdf`, test: 'download-pdf' },
      { label: 'GDSII', href: `${base}/layout.gds`, test: 'download-gds' },
      { label: 'DXF', href: `${base}/layout.dxf`, test: 'download-dxf' },
      { label: 'SVG', href: `${base}/layout.svg`, test: 'download-svg' },
    ];
  });

  protected readonly form = new FormGroup({
    reason: new FormControl('', { nonNullable: true }),
    toleranceEnergy: new FormControl('', { nonNullable: true }),
    minQuality: new FormControl('', { nonNullable: true }),
    batch: new FormControl('', { nonNullable: true }),
    energy: new FormControl('', { nonNullable: true }),
    width: new FormControl('', { nonNullable: true }),
    energySigma: new FormControl('', { nonNullable: true }),
    widthSigma: new FormControl('', { nonNullable: true }),
    /** "fitId:peak", or '' to use the typed figures. */
    fitPeak: new FormControl('', { nonNullable: true }),
  });
  protected readonly commentText = new FormControl('', { nonNullable: true });
  protected readonly mentions = new FormControl<string[]>([], { nonNullable: true });

  constructor() {
    effect(() => {
      const id = this.resonanceId();
      const gid = this.group.id();
      if (gid) untracked(() => this.load(gid, id));
    });
  }

  protected mentionNames(c: ResonanceComment): string {
    return c.mentions.map((m) => m.name).join(', ');
  }

  protected label(action: FabricationAction): string {
    const words = transitionOf(action).label;
    return words.charAt(0).toUpperCase() + words.slice(1);
  }

  protected move(action: FabricationAction): void {
    const gid = this.group.id();
    const r = this.record();
    if (!gid || !r || this.busy()) return;
    const v = this.form.getRawValue();
    const reason = v.reason.trim();
    let body: TransitionRequest;
    switch (action) {
      case 'propose':
        body = { action, reason, tolerances: { energyMeV: numberOf(v.toleranceEnergy), minQuality: numberOf(v.minQuality) } };
        break;
      case 'start_review':
        body = reason ? { action, reason } : { action };
        break;
      case 'send':
        body = { action, batch: v.batch.trim(), ...(reason ? { reason } : {}) };
        break;
      case 'measure': {
        if (v.fitPeak) {
          const [fitId, peak] = v.fitPeak.split(':');
          body = { action, fitId: fitId!, peak: Number(peak) };
          break;
        }
        const sE = numberOf(v.energySigma);
        const sG = numberOf(v.widthSigma);
        body = {
          action,
          energy: numberOf(v.energy) ?? Number.NaN,
          width: numberOf(v.width) ?? Number.NaN,
          ...(sE !== null ? { energyUncertainty: sE } : {}),
          ...(sG !== null ? { widthUncertainty: sG } : {}),
        };
        break;
      }
      default:
        body = { action, reason };
    }
    this.busy.set(true);
    this.api
      .move(gid, r.resonanceId, body)
      .pipe(takeUntilDestroyed(this.destroyRef))
      .subscribe({
        next: (rec) => {
          this.busy.set(false);
          this.record.set(rec);
          this.loadFitPeaks(gid, rec);
          this.form.reset();
          this.snackBar.open(`Now ${stateLabel(rec.state).toLowerCase()}.`, 'OK', { duration: 3000 });
        },
        error: (err: unknown) => {
          this.busy.set(false);
          this.errors.show(err);
        },
      });
  }

  protected postComment(): void {
    const gid = this.group.id();
    const text = this.commentText.value.trim();
    if (!gid || !text || this.busy()) return;
    this.busy.set(true);
    this.api
      .comment(gid, this.resonanceId(), text, this.mentions.value)
      .pipe(takeUntilDestroyed(this.destroyRef))
      .subscribe({
        next: (c) => {
          this.busy.set(false);
          this.comments.update((list) => [...list, c]);
          this.commentText.reset();
          this.mentions.reset();
        },
        error: (err: unknown) => {
          this.busy.set(false);
          this.errors.show(err);
        },
      });
  }

  private loadFitPeaks(groupId: string, r: FabricationRecord): void {
    if (!r.allowedActions.includes('measure') || this.fitPeaks().length > 0) return;
    this.fitsApi
      .fits(groupId)
      .pipe(takeUntilDestroyed(this.destroyRef))
      .subscribe({
        next: (fits) =>
          this.fitPeaks.set(
            fits
              .filter((f) => f.status === 'completed' && f.traceId !== null)
              .flatMap((f) =>
                (f.peaks ?? []).map((p, k) => ({
                  value: `${f.id}:${k}`,
                  label: `${f.deviceName ?? 'trace'} (${f.createdAt.slice(0, 10)}), peak ${k + 1}: E = ${formatEnergy(p.energy, 5)}, Γ = ${formatWidth(p.width)}`,
                })),
              ),
          ),
        error: () => this.fitPeaks.set([]),
      });
  }

  private load(groupId: string, id: string): void {
    this.api
      .record(groupId, id)
      .pipe(takeUntilDestroyed(this.destroyRef))
      .subscribe({
        next: (r) => {
          this.record.set(r);
          this.loadFitPeaks(groupId, r);
        },
        error: (err: unknown) => this.errors.show(err),
      });
    this.api
      .comments(groupId, id)
      .pipe(takeUntilDestroyed(this.destroyRef))
      .subscribe({ next: (c) => this.comments.set(c), error: (err: unknown) => this.errors.show(err) });
    if (this.canComment()) {
      this.membersApi
        .members(groupId)
        .pipe(takeUntilDestroyed(this.destroyRef))
        .subscribe({ next: (m) => this.members.set(m), error: () => this.members.set([]) });
    }
  }
}
