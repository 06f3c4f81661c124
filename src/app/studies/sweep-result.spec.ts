import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { TestBed } from '@angular/core/testing';
import { provideRouter } from '@angular/router';
import { provideEchartsCore } from 'ngx-echarts';
import { provideFakeCurrentGroup } from '../core/testing/fake-current-group';
import { sampleStep, sampleSweepOutcome } from '../core/testing/sample-study';
import { settle } from '../core/testing/next-request';
import { SweepResult } from './sweep-result';
import type { SweepOutcome } from '../../../shared/api/studies';

const studyId = '7b0c1f3e-2d4a-4b6c-8e9f-0a1b2c3d4e5f';
const stepUrl = `/api/groups/g1/studies/${studyId}/steps/1`;

function setUp(role: 'designer' | 'viewer' = 'designer', outcome: SweepOutcome = sampleSweepOutcome) {
  TestBed.configureTestingModule({
    providers: [
      provideHttpClient(),
      provideHttpClientTesting(),
      provideRouter([]),
      provideFakeCurrentGroup(role),
      provideEchartsCore({ echarts: () => import('./echarts') }),
    ],
  });
  const http = TestBed.inject(HttpTestingController);
  const fixture = TestBed.createComponent(SweepResult);
  fixture.componentRef.setInput('studyId', studyId);
  fixture.componentRef.setInput('outcome', outcome);
  fixture.detectChanges();
  return { http, fixture, host: fixture.nativeElement as HTMLElement };
}

describe('SweepResult', () => {
  it('says when the steps are coarse against the level spacing, and stays quiet when they are not', () => {
    const { fixture, host } = setUp('viewer', { ...sampleSweepOutcome, moves: { links: 20, large: 7, spacing: 0.11 } });
    expect(host.querySelector('[data-test=coarse-steps]')!.textContent).toContain('7 of 20 links moved a pole by more than half the mean level spacing');
    fixture.componentRef.setInput('outcome', { ...sampleSweepOutcome, moves: { links: 20, large: 0, spacing: 0.11 } });
    fixture.detectChanges();
    expect(host.querySelector('[data-test=coarse-steps]')).toBeNull();
  });

  it('tells steps whose map ran out of energies but sampled their poles apart from steps that did not', () => {
    const { host } = setUp('viewer', {
      ...sampleSweepOutcome,
      transmission: { ...sampleSweepOutcome.transmission!, budgetExhaustedSteps: [0, 2], poleSampledSteps: [1, 2] },
    });
    expect(host.querySelector('[data-test=map-coarse]')!.textContent).toContain('Steps 0 ran out');
    expect(host.querySelector('[data-test=map-coarse]')!.textContent).toContain('may be drawn too low');
    expect(host.querySelector('[data-test=map-pole-sampled]')!.textContent).toContain('Steps 2 ran out of sweep energies between their poles');
  });

  it('warns about the uncertified step and lists the avoided crossing', () => {
    const { host } = setUp();
    expect(host.querySelector('[data-test=uncertified]')!.textContent).toContain('1 of 3 step(s) are not certified');
    expect(host.querySelector('[data-test=uncertified]')!.textContent).toContain('may have missed poles');
    const row = host.querySelector('[data-test=marks] tbody tr')!;
    expect(row.textContent).toContain('Avoided crossing');
    expect(row.textContent).toContain('0 and 1');
    expect(host.querySelector('[data-step="2"]')!.textContent).toContain('uncertified');
    expect(host.querySelector('[data-step="0"]')!.textContent).not.toContain('uncertified');
  });

  it('opens a step with its mode densities and saves it as a model version', async () => {
    const { http, fixture, host } = setUp();
    host.querySelector<HTMLButtonElement>('[data-step="1"]')!.click();
    fixture.detectChanges();
    await settle();
    http.expectOne(stepUrl).flush(sampleStep);
    fixture.detectChanges();
    const panel = host.querySelector('[data-test=step-panel]')!;
    expect(panel.textContent).toContain('field (T) = 0.5');
    expect(panel.querySelectorAll('pw-density-image')).toHaveLength(2);
    expect(panel.querySelector('[data-pole="0"] figcaption')!.textContent).toContain('E = 3.2');

    panel.querySelector<HTMLButtonElement>('[data-test=save-step]')!.click();
    const save = http.expectOne(`${stepUrl}/save`);
    expect(save.request.method).toBe('POST');
    save.flush({ modelId: '5f0c1f3e-2d4a-4b6c-8e9f-0a1b2c3d4e5f', version: 3, resonances: 2, certified: true });
    fixture.detectChanges();
    expect(host.querySelector('[data-test=saved]')!.textContent).toContain('Saved as version 3');
    expect(host.querySelector('[data-test=saved]')!.textContent).toContain('its 2 resonance(s) in the catalogue');
    expect(host.querySelector('[data-test=saved]')!.textContent).not.toContain('not certified');
    expect(host.querySelector<HTMLButtonElement>('[data-test=save-step]')!.disabled).toBe(true);
  });

  it('offers no saving to a viewer', async () => {
    const { http, fixture, host } = setUp('viewer');
    host.querySelector<HTMLButtonElement>('[data-step="1"]')!.click();
    fixture.detectChanges();
    await settle();
    http.expectOne(stepUrl).flush(sampleStep);
    fixture.detectChanges();
    expect(host.querySelector('[data-test=step-panel]')).not.toBeNull();
    expect(host.querySelector('[data-test=save-step]')).toBeNull();
  });

  it('draws the transmission map of the line with its leads, or says why there is none', () => {
    const { fixture, host } = setUp();
    const map = host.querySelector('pw-transmission-map canvas')!;
    expect(map.getAttribute('aria-label')).toContain('T source → drain');
    expect(map.getAttribute('aria-label')).toContain('3 steps');
    expect(map.getAttribute('aria-label')).toContain('from 0 to 0.900');
    fixture.componentRef.setInput('outcome', { ...sampleSweepOutcome, transmission: { ...sampleSweepOutcome.transmission!, from: null, into: [] } });
    fixture.detectChanges();
    expect(host.querySelector('pw-transmission-map')).toBeNull();
    expect(host.querySelector('[data-test=no-map]')!.textContent).toContain('fewer than two leads');
    fixture.componentRef.setInput('outcome', { ...sampleSweepOutcome, transmission: null });
    fixture.detectChanges();
    expect(host.querySelector('[data-test=no-map]')!.textContent).toContain('without a transmission map');
  });

  it('follows a resonance along its trajectory: its mode first, then the next step', async () => {
    const { http, fixture, host } = setUp();
    // A click on trajectory 1's point at step 1 in the complex plane ([E, Im z, p, trajectory, step]).
    fixture.componentInstance['chartClick']({ seriesName: 'Poles', value: [3.4, -0.035, 0.5, 1, 1] });
    fixture.detectChanges();
    await settle();
    http.expectOne(stepUrl).flush(sampleStep);
    fixture.detectChanges();
    const followed = host.querySelector('[data-test=followed]')!;
    expect(followed.textContent).toContain('Trajectory 1 at this step');
    // Trajectory 1 runs through pole 1 of every step: here E = 3.4 meV.
    expect(followed.textContent).toContain('E = 3.4');
    expect(host.querySelector('[data-pole="1"]')!.classList).toContain('is-followed');
    expect(host.querySelector<HTMLButtonElement>('[data-test=previous-step]')!.disabled).toBe(false);
    host.querySelector<HTMLButtonElement>('[data-test=next-step]')!.click();
    fixture.detectChanges();
    await settle();
    http.expectOne(`/api/groups/g1/studies/${studyId}/steps/2`);
  });
});
