import { ChangeDetectionStrategy, Component, input, output } from '@angular/core';
import { MatButtonModule } from '@angular/material/button';
import { MatFormFieldModule } from '@angular/material/form-field';
import { MatIconModule } from '@angular/material/icon';
import { MatInputModule } from '@angular/material/input';
import { MatMenuModule } from '@angular/material/menu';
import { MatTooltipModule } from '@angular/material/tooltip';
import type { PlacedIssue } from '../core/errors/model-issues';
import { type PotentialKind, defaultTerm, newSeed, potentialKindLabels, potentialNumberFields } from './potential-kinds';
import type { GridExtent } from './shape-kinds';

type TermValue = Record<string, unknown>;

/**
 * The potential terms as forms: blocks (gates, tunnel barriers), Gaussian bumps and
 * disorder with its seed; explicit site values stay JSON. The lattice preview draws
 * the terms over the cavity.
 */
@Component({
  selector: 'pw-potential-editor',
  changeDetection: ChangeDetectionStrategy.OnPush,
  imports: [MatButtonModule, MatFormFieldModule, MatIconModule, MatInputModule, MatMenuModule, MatTooltipModule],
  template: `
    @for (t of terms(); track $index; let k = $index) {
      <fieldset class="term" [attr.data-term]="k">
        <legend>Term {{ k + 1 }}: {{ labelOf(t) }}</legend>
        <div class="row">
          @if (fieldsOf(t); as fields) {
            @for (f of fields; track f.key) {
              <mat-form-field subscriptSizing="dynamic">
                <mat-label>{{ f.label }}</mat-label>
                <input
                  matInput
                  type="number"
                  [value]="numberOf(t, f.key)"
                  (input)="setNumber(k, f.key, $event)"
                  [readonly]="readonly()"
                  [attr.data-field]="'potential.' + k + '.' + f.key"
                />
                @if (issueAt('potential.' + k + '.' + f.key); as m) {
                  <mat-hint class="field-issue">{{ m }}</mat-hint>
                }
              </mat-form-field>
            }
            @if (t['kind'] === 'disorder' && !readonly()) {
              <button mat-icon-button type="button" (click)="reseed(k)" aria-label="New seed" matTooltip="New seed: another disorder realisation">
                <mat-icon>casino</mat-icon>
              </button>
            }
          } @else {
            <mat-form-field class="wide" subscriptSizing="dynamic">
              <mat-label>[i, j, V (meV)] per site, as JSON</mat-label>
              <textarea matInput rows="3" class="code" [value]="json(t['values'])" (input)="setValues(k, $event)" [readonly]="readonly()"></textarea>
            </mat-form-field>
          }
          @if (!readonly()) {
            <button mat-icon-button type="button" (click)="remove(k)" [attr.aria-label]="'Remove term ' + (k + 1)" matTooltip="Remove this term">
              <mat-icon>delete</mat-icon>
            </button>
          }
        </div>
        @for (m of otherIssues(k); track $index) {
          <p class="issue" role="alert">{{ m }}</p>
        }
      </fieldset>
    } @empty {
      <p class="muted">No potential: V = 0 on every site.</p>
    }
    @if (!readonly()) {
      <button mat-stroked-button type="button" [matMenuTriggerFor]="addMenu" data-test="add-term"><mat-icon>add</mat-icon> Add a potential term</button>
      <mat-menu #addMenu="matMenu">
        @for (k of kinds; track k) {
          <button mat-menu-item type="button" (click)="add(k)">{{ labels[k] }}</button>
        }
      </mat-menu>
    }
  `,
  styles: `
    :host {
      display: block;
    }
    .term {
      border: 1px solid var(--mat-sys-outline-variant);
      border-radius: 8px;
      margin: 0 0 8px;
      padding: 4px 12px 8px;
    }
    .row {
      display: flex;
      flex-wrap: wrap;
      gap: 8px 12px;
      align-items: flex-start;
    }
    .row mat-form-field {
      width: 150px;
    }
    .row .wide {
      width: 100%;
      flex: 1 1 100%;
    }
    .code {
      font-family: ui-monospace, monospace;
      font-size: 12px;
    }
    .field-issue {
      color: var(--mat-sys-error);
      white-space: normal;
    }
    .issue {
      color: var(--mat-sys-error);
      margin: 4px 0;
      overflow-wrap: anywhere;
    }
    .muted {
      color: var(--mat-sys-on-surface-variant);
    }
  `,
})
export class PotentialEditor {
  readonly terms = input.required<readonly TermValue[]>();
  readonly issues = input<readonly PlacedIssue[]>([]);
  readonly extent = input<GridExtent>({ widthNm: 300, heightNm: 200 });
  readonly readonly = input(false);
  readonly termsChange = output<TermValue[]>();

  protected readonly kinds = Object.keys(potentialKindLabels) as PotentialKind[];
  protected readonly labels = potentialKindLabels;
  protected readonly json = (v: unknown) => JSON.stringify(v ?? []);

  protected labelOf(t: TermValue): string {
    return potentialKindLabels[t['kind'] as PotentialKind] ?? String(t['kind']);
  }

  protected fieldsOf(t: TermValue) {
    return t['kind'] === 'sites' ? null : (potentialNumberFields[t['kind'] as Exclude<PotentialKind, 'sites'>] ?? null);
  }

  protected numberOf(t: TermValue, key: string): number | null {
    return typeof t[key] === 'number' ? (t[key] as number) : null;
  }

  protected issueAt(path: string): string {
    return this.issues().find((i) => i.path === path)?.message ?? '';
  }

  /** Issues of term k that no field shows (the term as a whole, a list entry). */
  protected otherIssues(k: number): string[] {
    const t = this.terms()[k];
    const fields = new Set((this.fieldsOf(t) ?? []).map((f) => `potential.${k}.${f.key}`));
    return this.issues()
      .filter((i) => (i.path === `potential.${k}` || i.path.startsWith(`potential.${k}.`)) && !fields.has(i.path))
      .map((i) => i.message);
  }

  protected add(kind: PotentialKind): void {
    this.termsChange.emit([...this.terms(), defaultTerm(kind, this.extent()) as unknown as TermValue]);
  }

  protected remove(k: number): void {
    this.termsChange.emit(this.terms().filter((_, n) => n !== k));
  }

  protected reseed(k: number): void {
    this.replace(k, { ...this.terms()[k], seed: newSeed() });
  }

  protected setNumber(k: number, key: string, event: Event): void {
    const text = (event.target as HTMLInputElement).value.trim();
    const value = text === '' ? null : Number(text);
    this.replace(k, { ...this.terms()[k], [key]: value !== null && Number.isFinite(value) ? value : null });
  }

  protected setValues(k: number, event: Event): void {
    try {
      this.replace(k, { ...this.terms()[k], values: JSON.parse((event.target as HTMLTextAreaElement).value) });
    } catch {
      // Half-typed JSON: the document changes once it parses.
    }
  }

  private replace(k: number, term: TermValue): void {
    const next = [...this.terms()];
    next[k] = term;
    this.termsChange.emit(next);
  }
}
