import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { TestBed } from '@angular/core/testing';
import { provideRouter } from '@angular/router';
import { provideFakeCurrentGroup } from './fake-current-group';
import { ModelEditor } from './model-editor';

function setUp(role: 'designer' | 'viewer') {
  TestBed.configureTestingModule({
    providers: [provideHttpClient(), provideHttpClientTesting(), provideRouter([]), provideFakeCurrentGroup(role)],
  });
  const fixture = TestBed.createComponent(ModelEditor);
  fixture.detectChanges();
  return { fixture, http: TestBed.inject(HttpTestingController), host: fixture.nativeElement as HTMLElement };
}

/** The mat-form-field that holds the input for a document field path. */
function fieldOf(host: HTMLElement, path: string): HTMLElement {
  const input = host.querySelector(`[data-field="${path}"]`);
  if (!input) throw new Error(`no input for ${path}`);
  return input.closest('mat-form-field') as HTMLElement;
}

describe('ModelEditor', () => {
  it('shows the field errors of a 400 next to the field they name', async () => {
    const { fixture, http, host } = setUp('designer');
    const name = host.querySelector<HTMLInputElement>('[data-field="name"]')!;
    name.value = 'Dot A';
    name.dispatchEvent(new Event('input'));
    fixture.detectChanges();

    (host.querySelector('[data-test="save"]') as HTMLButtonElement).click();
    const req = http.expectOne((r) => r.method === 'POST' && r.url === '/api/groups/g1/models');
    expect(req.request.body.document.name).toBe('Dot A');
    expect(req.request.body.document.leads).toHaveLength(2);
    req.flush(
      {
        status: 400,
        code: 'validation_failed',
        message: 'The model is not valid.',
        issues: [
          { path: 'leads.1.start', message: 'mouth site (59, 45) of leads[1] (right) is outside the cavity' },
          { path: 'document.spacing', message: 'spacing must be positive' },
          { path: 'document.leads.0', message: 'leads[0] (left) overlaps leads[1]' },
        ],
      },
      { status: 400, statusText: 'Bad Request' },
    );
    fixture.detectChanges();
    await fixture.whenStable();

    expect(fieldOf(host, 'leads.1.start').textContent).toContain('mouth site (59, 45) of leads[1] (right) is outside the cavity');
    expect(fieldOf(host, 'leads.0.start').textContent).not.toContain('outside the cavity');
    expect(fieldOf(host, 'spacing').textContent).toContain('spacing must be positive');
    expect(host.querySelector('[data-lead="0"]')!.textContent).toContain('leads[0] (left) overlaps leads[1]');
    http.match((r) => r.url.endsWith('/models/validate'));
  });

  it('redraws the lattice from the form at once', () => {
    const { fixture, http, host } = setUp('designer');
    const nx = host.querySelector<HTMLInputElement>('[data-field="grid.nx"]')!;
    nx.value = '80';
    nx.dispatchEvent(new Event('input'));
    fixture.detectChanges();
    // 80 columns, the 300 nm × 200 nm rectangle at a = 5 nm still covers 60 × 40 sites.
    expect(host.querySelector('mat-card-subtitle')!.textContent).toContain('80 × 40 grid · 2400 cavity sites');
    // Half-open rectangles: width 300 nm = 60·a covers columns 0..59 of every row (docs/physics-model.md).
    const d = host.querySelector('pw-lattice-preview path.mask')!.getAttribute('d')!;
    expect(d.match(/M0 \d+h60v1h-60z/g)).toHaveLength(40);
    http.match((r) => r.url.endsWith('/models/validate'));
  });

  it('gives viewers no save or lead controls', () => {
    const { host, http } = setUp('viewer');
    expect(host.querySelector('[data-test="save"]')).toBeNull();
    expect(host.textContent).not.toContain('Add a lead');
    http.match(() => true);
  });
});
