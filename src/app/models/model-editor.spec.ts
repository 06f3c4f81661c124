import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { TestBed } from '@angular/core/testing';
import { provideRouter } from '@angular/router';
import { provideFakeCurrentGroup } from '../core/testing/fake-current-group';
import { ModelEditor } from './model-editor';
import { starterModel } from './model-form';
import { grapheneStarter } from './lattice-switch';
import { type ModelDetail, getModelRoute } from '../../../shared/api/models';
import { cavityModelSchema } from '../../../shared/model/cavity-model';
import { deriveFigures } from '../../../shared/model/derived-figures';
import { validateCavityModel } from '../../../shared/model/model-validation';
import { answerFixture, fixtureId } from '../core/testing/answer-fixtures';

/** A saved model as GET /models/:id answers, built on the editor's own starting document. */
const modelId = fixtureId(0x201);
const saved: ModelDetail = answerFixture(getModelRoute, {
  id: modelId,
  name: 'Dot A',
  family: 'rectangle',
  physics: 'electrons',
  latestVersion: 2,
  material: 'gaas',
  spacingNm: 5,
  fieldT: 0,
  siteCount: 2400,
  leadCount: 2,
  keyDimensions: { width: 300, height: 200 },
  updatedAt: '2025-01-01T10:00:00Z',
  createdBy: { id: fixtureId(0x301), name: 'Ada' },
  document: { ...starterModel, name: 'Dot A' },
  versions: [{ version: 2, createdAt: '2025-01-01T10:00:00Z', createdBy: { id: fixtureId(0x301), name: 'Ada' }, usedByRuns: 1 }],
  derived: {
    siteCount: 2400,
    hopping: 22.75,
    massRatio: 0.067,
    energyCeiling: 11.4,
    wavelengthCeiling: 8.9,
    fluxPerPlaquette: 0,
    cyclotronEnergy: 0,
    magneticLength: null,
    leads: [],
  },
});

function setUp(role: 'designer' | 'viewer' | 'reviewer', modelId?: string) {
  TestBed.configureTestingModule({
    providers: [provideHttpClient(), provideHttpClientTesting(), provideRouter([]), provideFakeCurrentGroup(role)],
  });
  const fixture = TestBed.createComponent(ModelEditor);
  if (modelId) fixture.componentRef.setInput('modelId', modelId);
  fixture.detectChanges();
  return { fixture, http: TestBed.inject(HttpTestingController), host: fixture.nativeElement as HTMLElement };
}

/** The mat-form-field that holds the input for a document field path. */
function fieldOf(host: HTMLElement, path: string): HTMLElement {
  const input = host.querySelector(`[data-field="${path}"]`);
  if (!input) throw new Error(`no input for ${path}`);
  return input.closest('mat-form-field') as HTMLElement;
}

// The editor renders the whole form with Material fields: slow on a loaded 2-core machine.
vi.setConfig({ testTimeout: 30_000 });

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

    // The long message goes under the lead, in full and naming the field; the narrow field only points to it.
    expect(fieldOf(host, 'leads.1.start').textContent).toContain('See the message below.');
    expect(host.querySelector('[data-lead="1"]')!.textContent).toContain(
      'Lead 2, the first mouth site: mouth site (59, 45) of leads[1] (right) is outside the cavity',
    );
    expect(fieldOf(host, 'leads.0.start').textContent).not.toContain('outside the cavity');
    expect(fieldOf(host, 'spacing').textContent).toContain('spacing must be positive');
    expect(host.querySelector('[data-lead="0"]')!.textContent).toContain('leads[0] (left) overlaps leads[1]');
    http.match((r) => r.url.endsWith('/models/validate'));
  });

  it('shows the current document in the JSON view, and the form follows edits made there', async () => {
    const { fixture, http, host } = setUp('designer');
    (host.querySelector('[data-test="view-json"] button') as HTMLButtonElement).click();
    fixture.detectChanges();
    const box = host.querySelector<HTMLTextAreaElement>('[data-field="document.json"]')!;
    const shown = JSON.parse(box.value);
    expect(shown.shape).toEqual(starterModel.shape);
    expect(shown.leads).toHaveLength(2);
    box.value = JSON.stringify({ ...shown, shape: { kind: 'ellipse', cx: 150, cy: 100, rx: 140, ry: 95 } });
    box.dispatchEvent(new Event('input'));
    fixture.detectChanges();
    (host.querySelector('[data-test="view-form"] button') as HTMLButtonElement).click();
    fixture.detectChanges();
    expect(host.querySelector<HTMLInputElement>('[data-field="shape.rx"]')!.value).toBe('140');
    http.match((r) => r.url.endsWith('/models/validate'));
  });

  it('adds lead stubs to a curved cavity with one click each, so the leads validate', () => {
    const { fixture, http, host } = setUp('designer');
    (host.querySelector('[data-test="view-json"] button') as HTMLButtonElement).click();
    fixture.detectChanges();
    const box = host.querySelector<HTMLTextAreaElement>('[data-field="document.json"]')!;
    const doc = { ...JSON.parse(box.value), name: 'Dot', shape: { kind: 'ellipse', cx: 150, cy: 100, rx: 110, ry: 80 } };
    box.value = JSON.stringify(doc);
    box.dispatchEvent(new Event('input'));
    (host.querySelector('[data-test="view-form"] button') as HTMLButtonElement).click();
    fixture.detectChanges();
    expect(host.querySelector('[data-lead="0"]')!.textContent).toContain('outside the cavity');
    (host.querySelector('[data-test="stub-0"]') as HTMLButtonElement).click();
    (host.querySelector('[data-test="stub-1"]') as HTMLButtonElement).click();
    fixture.detectChanges();
    expect(host.querySelectorAll('[data-member]')).toHaveLength(3);
    expect(host.querySelector('[data-lead="0"]')!.textContent).not.toContain('outside the cavity');
    expect(host.querySelector('[data-lead="1"]')!.textContent).not.toContain('outside the cavity');
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

  for (const role of ['viewer', 'reviewer'] as const) {
    it(`shows a ${role} a saved model with no save, launch, upload or lead controls, and no live check`, async () => {
      const { fixture, http, host } = setUp(role, modelId);
      http.expectOne(`/api/groups/g1/models/${modelId}`).flush(saved);
      fixture.detectChanges();
      await fixture.whenStable();
      expect(host.textContent).toContain('Dot A · version 2');
      expect(host.querySelector<HTMLInputElement>('[data-field="name"]')!.disabled).toBe(true);
      expect(host.querySelector('[data-test="save"]')).toBeNull();
      expect(host.querySelector('input[type="file"]')).toBeNull();
      const words = Array.from(host.querySelectorAll('button, a')).map((e) => `${e.textContent} ${e.getAttribute('aria-label') ?? ''}`);
      expect(words.filter((w) => /save|launch|add a lead|remove lead|outline/i.test(w))).toEqual([]);
      // The form is read-only, so the editor does not ask the server to check it.
      await new Promise((r) => setTimeout(r, 500));
      http.expectNone((r) => r.url.endsWith('/models/validate'));
      http.verify();
    });
  }

  it('gives a designer the same saved model with its controls', async () => {
    const { fixture, http, host } = setUp('designer', modelId);
    http.expectOne(`/api/groups/g1/models/${modelId}`).flush(saved);
    fixture.detectChanges();
    await fixture.whenStable();
    expect(host.querySelector('[data-test="save"]')).not.toBeNull();
    expect(host.textContent).toContain('Launch a run');
    expect(host.querySelector('input[type="file"]')).not.toBeNull();
    http.match((r) => r.url.endsWith('/models/validate'));
  });

  it('switches to a microwave resonator: ε_r and h shown, material, field, potential and offsets hidden, lengths in mm', async () => {
    const { fixture, host, http } = setUp('designer');
    expect(host.querySelector('[data-field="material"]')).not.toBeNull();
    expect(host.querySelector('[data-field="physics.height"]')).toBeNull();
    (fixture.componentInstance as unknown as { form: { controls: { physics: { setValue(v: string): void } } } }).form.controls.physics.setValue('microwave');
    fixture.detectChanges();
    expect(host.querySelector('[data-field="physics.permittivity"]')).not.toBeNull();
    expect(host.querySelector('[data-field="physics.height"]')).not.toBeNull();
    for (const gone of ['material', 'field', 'leads.0.offset']) expect(host.querySelector(`[data-field="${gone}"]`)).toBeNull();
    expect(host.querySelector('[data-test="potential-card"]')).toBeNull();
    expect(fieldOf(host, 'spacing').textContent).toContain('Spacing a (mm)');
    http.match(() => true);
  });

  /** The editor's form and lattice choice, as the template drives them. */
  type Driven = {
    form: { controls: { lattice: { controls: { kind: { setValue(v: string): void } } }; field: { setValue(v: number): void } } };
    chooseLattice(kind: string): void;
  };
  function pickGraphene(fixture: ReturnType<typeof setUp>['fixture']): void {
    const editor = fixture.componentInstance as unknown as Driven;
    editor.form.controls.lattice.controls.kind.setValue('honeycomb');
    editor.chooseLattice('honeycomb');
    fixture.detectChanges();
  }

  it('turns a new model into a graphene dot: t in eV with the preset’s source, no material, atoms and bonds drawn', () => {
    const { fixture, http, host } = setUp('designer');
    expect(host.querySelector('[data-field="lattice.hopping"]')).toBeNull();
    pickGraphene(fixture);
    expect(host.querySelector<HTMLInputElement>('[data-field="lattice.hopping"]')!.value).toBe('2.7');
    expect(host.querySelector('[data-field="material"]')).toBeNull();
    expect(host.querySelector('[data-test="graphene-source"]')!.textContent).toContain('Castro Neto');
    expect(fieldOf(host, 'spacing').textContent).toContain('C–C distance a_CC (nm)');
    expect(host.querySelector<HTMLInputElement>('[data-field="spacing"]')!.value).toBe('0.142');
    expect(fieldOf(host, 'leads.0.width').textContent).toContain('Width (zigzag chains)');
    expect(host.querySelector('[data-test="lattice-note"]')!.textContent).toContain('graphene dot');
    // The drawing: the atoms the shared rules keep, their bonds, the two zigzag leads.
    const subtitle = host.querySelector('mat-card-subtitle')!.textContent!;
    const checked = validateCavityModel({ ...grapheneStarter(), name: 'x' });
    expect(checked.ok).toBe(true);
    expect(subtitle).toContain(`${checked.ok ? checked.siteCount : -1} atoms · honeycomb, a_CC = 0.142 nm`);
    expect(host.querySelector('pw-lattice-preview path.bond')).not.toBeNull();
    expect(Array.from(host.querySelectorAll('pw-lattice-preview path.lead-bond')).map((p) => p.getAttribute('data-edge'))).toEqual(['zigzag', 'zigzag']);
    expect(host.querySelector('[data-test="no-outline-upload"]')).not.toBeNull();
    http.match((r) => r.url.endsWith('/models/validate'));
  });

  it('round-trips the lattice block through the JSON view', () => {
    const { fixture, http, host } = setUp('designer');
    pickGraphene(fixture);
    (host.querySelector('[data-test="view-json"] button') as HTMLButtonElement).click();
    fixture.detectChanges();
    const box = host.querySelector<HTMLTextAreaElement>('[data-field="document.json"]')!;
    const shown = JSON.parse(box.value);
    expect(shown.lattice).toEqual({ kind: 'honeycomb', hopping: 2.7, removeDangling: true });
    expect(shown.material).toBeUndefined();
    box.value = JSON.stringify({ ...shown, lattice: { kind: 'honeycomb', hopping: 2.8, sublatticePotential: 0.05, nextHopping: 0.1 } });
    box.dispatchEvent(new Event('input'));
    fixture.detectChanges();
    (host.querySelector('[data-test="view-form"] button') as HTMLButtonElement).click();
    fixture.detectChanges();
    expect(host.querySelector<HTMLInputElement>('[data-field="lattice.hopping"]')!.value).toBe('2.8');
    expect(host.querySelector<HTMLInputElement>('[data-field="lattice.sublatticePotential"]')!.value).toBe('0.05');
    expect(host.querySelector<HTMLInputElement>('[data-field="lattice.nextHopping"]')!.value).toBe('0.1');
    (host.querySelector('[data-test="view-json"] button') as HTMLButtonElement).click();
    fixture.detectChanges();
    expect(JSON.parse(host.querySelector<HTMLTextAreaElement>('[data-field="document.json"]')!.value).lattice).toEqual({
      kind: 'honeycomb',
      hopping: 2.8,
      sublatticePotential: 0.05,
      nextHopping: 0.1,
    });
    http.match((r) => r.url.endsWith('/models/validate'));
  });

  it('offers the field in the leads only when there is a field, and writes fieldInLeads when ticked', () => {
    const { fixture, http, host } = setUp('designer');
    expect(host.querySelector('[data-field="fieldInLeads"]')).toBeNull();
    (fixture.componentInstance as unknown as Driven).form.controls.field.setValue(2);
    fixture.detectChanges();
    const box = host.querySelector('[data-field="fieldInLeads"]')!;
    expect(box.textContent).toContain('Field acts in the leads too');
    expect(box.closest('.field-in-leads')!.textContent).toContain('field-free');
    (box.querySelector('input[type="checkbox"]') as HTMLInputElement).click();
    fixture.detectChanges();
    (host.querySelector('[data-test="view-json"] button') as HTMLButtonElement).click();
    fixture.detectChanges();
    const doc = JSON.parse(host.querySelector<HTMLTextAreaElement>('[data-field="document.json"]')!.value);
    expect(doc.field).toBe(2);
    expect(doc.fieldInLeads).toBe(true);
    http.match((r) => r.url.endsWith('/models/validate'));
  });

  it('shows a saved graphene model’s figures: t in eV, the Dirac cone, and no made-up lead thresholds', async () => {
    const document = { ...grapheneStarter(), name: 'Flake', field: 1 };
    const model = cavityModelSchema.parse(document);
    const figures = deriveFigures(model, 2571);
    const graphene: ModelDetail = answerFixture(getModelRoute, {
      ...saved,
      name: 'Flake',
      family: 'composite',
      material: 'honeycomb',
      spacingNm: 0.142,
      fieldT: 1,
      siteCount: 2571,
      document,
      derived: { ...figures, magneticLength: figures.magneticLength },
    });
    const { fixture, http, host } = setUp('designer', modelId);
    http.expectOne(`/api/groups/g1/models/${modelId}`).flush(graphene);
    fixture.detectChanges();
    await fixture.whenStable();
    const panel = host.querySelector('[data-test="honeycomb-figures"]')!;
    // t = 2.7 eV = 2700 meV; the rest are the figures as the API sends them.
    expect(panel.querySelector('[data-test="hopping"]')!.textContent).toContain('2.700 eV (2700 meV)');
    expect(panel.textContent).toContain('Cavity atoms');
    expect(panel.textContent).toContain('first Landau level');
    expect(panel.querySelector('[data-test="ceiling"]')!.textContent).toContain('675.0 meV');
    const leads = Array.from(panel.querySelectorAll('[data-test="lead-thresholds"]')).map((e) => e.textContent!);
    expect(leads).toHaveLength(2);
    for (const text of leads) {
      expect(text).toContain('zigzag ribbon, 8 chains');
      expect(text).toContain('no closed-form channel thresholds');
      expect(text).not.toMatch(/\d meV/);
    }
    // The lattice select shows the honeycomb, and the form writes the lattice back unchanged.
    expect(host.querySelector<HTMLInputElement>('[data-field="lattice.hopping"]')!.value).toBe('2.7');
    http.match((r) => r.url.endsWith('/models/validate'));
  });
});
