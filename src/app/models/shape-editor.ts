import { ChangeDetectionStrategy, Component, computed, input, output } from '@angular/core';
import { MatButtonModule } from '@angular/material/button';
import { MatFormFieldModule } from '@angular/material/form-field';
import { MatIconModule } from '@angular/material/icon';
import { MatInputModule } from '@angular/material/input';
import { MatSelectModule } from '@angular/material/select';
import { MatTooltipModule } from '@angular/material/tooltip';
import type { PlacedIssue } from '../core/errors/model-issues';
import { type GridExtent, type ShapeKind, defaultShape, shapeKindLabels, shapeKinds, shapeNumberFields } from './shape-kinds';

type ShapeValue = Record<string, unknown>;

/**
 * One node of the cavity shape as a form: a family, its fields, and for unions and
 * subtractions the members as a small tree (add, remove, move up or down), each
 * member edited by this same component. Every change emits the whole new node, so
 * the parent's document (and its JSON view) is always the shape on screen.
 */
@Component({
  selector: 'pw-shape-editor',
  changeDetection: ChangeDetectionStrategy.OnPush,
  imports: [MatButtonModule, MatFormFieldModule, MatIconModule, MatInputModule, MatSelectModule, MatTooltipModule],
  templateUrl: './shape-editor.html',
  styleUrl: './shape-editor.scss',
})
export class ShapeEditor {
  readonly shape = input.required<ShapeValue>();
  /** Dotted document path of this node: "shape", "shape.of.1", "shape.from". */
  readonly path = input('shape');
  /** Every issue under the shape, already in words; each field picks its own. */
  readonly issues = input<readonly PlacedIssue[]>([]);
  readonly extent = input<GridExtent>({ widthNm: 300, heightNm: 200 });
  readonly readonly = input(false);
  /** The model's length unit: nm for electrons, mm for a microwave resonator (the labels say it). */
  readonly lengthUnit = input('nm');
  readonly shapeChange = output<ShapeValue>();

  protected readonly kinds = shapeKinds;
  protected readonly kindLabels = shapeKindLabels;
  protected readonly kind = computed(() => String(this.shape()['kind'] ?? '') as ShapeKind);
  protected readonly numberFields = computed(() => {
    const unit = this.lengthUnit();
    return shapeNumberFields[this.kind()]?.map((f) => ({ ...f, label: f.label.replace('(nm)', `(${unit})`) })) ?? null;
  });
  protected readonly members = computed(() => (Array.isArray(this.shape()['of']) ? (this.shape()['of'] as ShapeValue[]) : []));
  protected readonly removed = computed(() => (Array.isArray(this.shape()['remove']) ? (this.shape()['remove'] as ShapeValue[]) : []));
  protected readonly base = computed(() => (this.shape()['from'] as ShapeValue | undefined) ?? { kind: 'rectangle' });
  protected readonly verticesText = computed(() => {
    const v = this.shape()['vertices'];
    return Array.isArray(v) ? v.map((p) => (Array.isArray(p) ? p.join(', ') : '')).join('\n') : '';
  });
  protected readonly jsonText = computed(() => JSON.stringify(this.shape(), null, 2));
  /** Issues at this node itself or at a key without a field of its own (e.g. "a union needs at least one shape"). */
  protected readonly ownIssues = computed(() => {
    const here = this.path();
    const fields = new Set((this.numberFields() ?? []).map((f) => `${here}.${f.key}`));
    return this.issues()
      .filter((i) => {
        if (i.path === here) return true;
        if (!i.path.startsWith(`${here}.`) || fields.has(i.path)) return false;
        const rest = i.path.slice(here.length + 1).split('.');
        // Deeper paths belong to a member editor, which shows them itself.
        return !(['of', 'remove'].includes(rest[0]) && rest.length > 1) && rest[0] !== 'from';
      })
      .map((i) => i.message);
  });

  protected issueAt(key: string): string {
    const p = `${this.path()}.${key}`;
    return this.issues().find((i) => i.path === p)?.message ?? '';
  }

  protected numberOf(key: string): number | null {
    const v = this.shape()[key];
    return typeof v === 'number' ? v : null;
  }

  protected setKind(kind: ShapeKind): void {
    if (kind === this.kind()) return;
    this.shapeChange.emit(defaultShape(kind, this.extent(), this.shape()) as unknown as ShapeValue);
  }

  protected setNumber(key: string, event: Event, optional = false): void {
    const el = event.target as HTMLInputElement;
    const value = el.value.trim() === '' ? null : Number(el.value);
    const next: ShapeValue = { ...this.shape() };
    if (value === null && optional) delete next[key];
    else next[key] = value !== null && Number.isFinite(value) ? value : null;
    this.shapeChange.emit(next);
  }

  /** "x, y" per line; a line that does not read as two numbers stays as text so the check names it. */
  protected setVertices(event: Event): void {
    const lines = (event.target as HTMLTextAreaElement).value.split('\n').filter((l) => l.trim());
    const vertices = lines.map((l) => {
      const nums = l
        .split(/[,;\s]+/)
        .filter(Boolean)
        .map(Number);
      return nums.length === 2 && nums.every(Number.isFinite) ? nums : l.trim();
    });
    this.shapeChange.emit({ ...this.shape(), vertices });
  }

  protected setJson(event: Event): void {
    try {
      const parsed = JSON.parse((event.target as HTMLTextAreaElement).value) as unknown;
      if (parsed && typeof parsed === 'object' && !Array.isArray(parsed)) this.shapeChange.emit(parsed as ShapeValue);
    } catch {
      // Half-typed JSON: keep the text in the box; the document changes once it parses.
    }
  }

  protected setMember(list: 'of' | 'remove', index: number, member: ShapeValue): void {
    const items = [...(list === 'of' ? this.members() : this.removed())];
    items[index] = member;
    this.shapeChange.emit({ ...this.shape(), [list]: items });
  }

  protected addMember(list: 'of' | 'remove'): void {
    const items = list === 'of' ? this.members() : this.removed();
    const extent = this.extent();
    const fresh = list === 'of' ? defaultShape('rectangle', extent) : defaultShape('disk', { widthNm: extent.widthNm / 2, heightNm: extent.heightNm / 2 });
    this.shapeChange.emit({ ...this.shape(), [list]: [...items, fresh] });
  }

  protected removeMember(list: 'of' | 'remove', index: number): void {
    const items = (list === 'of' ? this.members() : this.removed()).filter((_, k) => k !== index);
    this.shapeChange.emit({ ...this.shape(), [list]: items });
  }

  protected moveMember(list: 'of' | 'remove', index: number, by: -1 | 1): void {
    const items = [...(list === 'of' ? this.members() : this.removed())];
    const to = index + by;
    if (to < 0 || to >= items.length) return;
    [items[index], items[to]] = [items[to], items[index]];
    this.shapeChange.emit({ ...this.shape(), [list]: items });
  }

  protected setBase(from: ShapeValue): void {
    this.shapeChange.emit({ ...this.shape(), from });
  }
}
