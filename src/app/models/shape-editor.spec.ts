import { TestBed } from '@angular/core/testing';
import { ShapeEditor } from './shape-editor';

function mount(shape: Record<string, unknown>, issues: { path: string; message: string }[] = []) {
  const fixture = TestBed.createComponent(ShapeEditor);
  fixture.componentRef.setInput('shape', shape);
  fixture.componentRef.setInput('issues', issues);
  fixture.componentRef.setInput('extent', { widthNm: 300, heightNm: 200 });
  const emitted: Record<string, unknown>[] = [];
  fixture.componentInstance.shapeChange.subscribe((s) => {
    emitted.push(s);
    fixture.componentRef.setInput('shape', s);
  });
  fixture.detectChanges();
  return { fixture, emitted, host: fixture.nativeElement as HTMLElement };
}

function click(host: HTMLElement, label: string) {
  const button = Array.from(host.querySelectorAll('button')).find((b) => (b.getAttribute('aria-label') ?? b.textContent ?? '').includes(label));
  if (!button) throw new Error(`no button ${label}`);
  button.click();
}

describe('ShapeEditor', () => {
  it('edits a field of an ellipse and emits the whole shape', () => {
    const { fixture, emitted, host } = mount({ kind: 'ellipse', cx: 150, cy: 100, rx: 110, ry: 80 });
    const ry = host.querySelector<HTMLInputElement>('[data-field="shape.ry"]')!;
    expect(ry.value).toBe('80');
    ry.value = '60';
    ry.dispatchEvent(new Event('input'));
    fixture.detectChanges();
    expect(emitted.at(-1)).toEqual({ kind: 'ellipse', cx: 150, cy: 100, rx: 110, ry: 60 });
  });

  it('adds, reorders and removes union members as a tree', () => {
    const { fixture, emitted, host } = mount({ kind: 'union', of: [{ kind: 'disk', cx: 150, cy: 100, radius: 80 }] });
    click(host, 'Add a member');
    fixture.detectChanges();
    const after = emitted.at(-1) as { of: { kind: string }[] };
    expect(after.of.map((m) => m.kind)).toEqual(['disk', 'rectangle']);
    expect(host.querySelectorAll('[data-member]')).toHaveLength(2);
    click(host, 'Move member 2 up');
    fixture.detectChanges();
    expect((emitted.at(-1) as { of: { kind: string }[] }).of.map((m) => m.kind)).toEqual(['rectangle', 'disk']);
    // A member's own field, two levels down, edits that member only.
    const radius = host.querySelector<HTMLInputElement>('[data-field="shape.of.1.radius"]')!;
    radius.value = '70';
    radius.dispatchEvent(new Event('input'));
    fixture.detectChanges();
    expect((emitted.at(-1) as { of: Record<string, unknown>[] }).of[1]).toEqual({ kind: 'disk', cx: 150, cy: 100, radius: 70 });
    click(host, 'Remove member 1');
    fixture.detectChanges();
    expect((emitted.at(-1) as { of: { kind: string }[] }).of.map((m) => m.kind)).toEqual(['disk']);
  });

  it('shows an issue under the field it names, inside the member', () => {
    const { host } = mount({ kind: 'union', of: [{ kind: 'ellipse', cx: 1, cy: 2, rx: 3 }] }, [
      { path: 'shape.of.0.ry', message: 'Shape, member 1 of the union, semi-axis y (ry) is missing: enter a number.' },
    ]);
    const field = host.querySelector('[data-field="shape.of.0.ry"]')!.closest('mat-form-field')!;
    expect(field.textContent).toContain('semi-axis y (ry) is missing');
  });

  it('fills every field when the family changes, so no field starts empty', () => {
    const { fixture, emitted } = mount({ kind: 'disk', cx: 150, cy: 100, radius: 80 });
    (fixture.componentInstance as unknown as { setKind(k: string): void }).setKind('ellipse');
    expect(emitted.at(-1)).toEqual({ kind: 'ellipse', cx: 150, cy: 100, rx: 120, ry: 80 });
  });
});
