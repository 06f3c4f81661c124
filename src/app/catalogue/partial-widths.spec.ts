import { TestBed } from '@angular/core/testing';
import { PartialWidths } from './partial-widths';

describe('PartialWidths', () => {
  function render(totalMhz: number | null): string {
    const fixture = TestBed.createComponent(PartialWidths);
    fixture.componentRef.setInput('widths', [
      { lead: 'west', width: 0.003 },
      { lead: 'east', width: 0.001 },
    ]);
    fixture.componentRef.setInput('total', 0.004);
    fixture.componentRef.setInput('totalMhz', totalMhz);
    fixture.detectChanges();
    return (fixture.nativeElement as HTMLElement).textContent!.replace(/\s+/g, ' ');
  }

  it('gives each lead its width and share of Γ', () => {
    const text = render(null);
    expect(text).toContain('west');
    expect(text).toMatch(/3(\.0+)? µeV/);
  });

  it("gives a microwave port its share of Γ_f in MHz, not the raw k² width", () => {
    const text = render(8);
    expect(text).toContain('6.000 MHz · 75.0 %');
    expect(text).toContain('2.000 MHz · 25.0 %');
    expect(text).not.toMatch(/eV/);
  });
});
