import { provideHttpClient } from '@angular/common/http';
import { provideHttpClientTesting } from '@angular/common/http/testing';
import { TestBed } from '@angular/core/testing';
import { provideRouter } from '@angular/router';
import { provideEchartsCore } from 'ngx-echarts';
import { provideFakeCurrentGroup } from '../core/testing/fake-current-group';
import { sampleEnsembleOutcome } from '../core/testing/sample-study';
import { EnsembleResult } from './ensemble-result';

function render(outcome = sampleEnsembleOutcome) {
  TestBed.configureTestingModule({
    providers: [
      provideHttpClient(),
      provideHttpClientTesting(),
      provideRouter([]),
      provideFakeCurrentGroup('designer'),
      provideEchartsCore({ echarts: () => import('./echarts') }),
    ],
  });
  const fixture = TestBed.createComponent(EnsembleResult);
  fixture.componentRef.setInput('studyId', 'x');
  fixture.componentRef.setInput('outcome', outcome);
  fixture.detectChanges();
  return fixture.nativeElement as HTMLElement;
}

describe('EnsembleResult', () => {
  it('shows the yield, and counts and lists the realisation that could not be followed', () => {
    const host = render();
    expect(host.querySelector('[data-test=yield]')!.textContent).toContain('50.0%');
    expect(host.querySelector('[data-test=yield]')!.textContent).toContain('2 of 4');
    expect(host.querySelector('[data-test=followed]')!.textContent).toContain('Followed in 3 of 4');
    expect(host.querySelector('[data-test=followed]')!.textContent).toContain('1 could not be followed');
    const rows = host.querySelectorAll('[data-test=not-followed] tbody tr');
    expect(rows).toHaveLength(1);
    expect(rows[0]!.textContent).toContain('1003');
    expect(rows[0]!.textContent).toContain('no pole within 0.5 meV');
  });

  it('gives mean and spread beside each histogram', () => {
    const host = render();
    expect(host.querySelectorAll('[data-histogram]')).toHaveLength(3);
    const energy = host.querySelector('[data-histogram=energy] .figures')!.textContent!;
    expect(energy).toContain('mean 3.063');
    expect(energy).toContain('3 sample(s)');
    expect(energy).toContain('nominal 3');
  });

  it('says there is no yield when no tolerance was stated', () => {
    const host = render({ ...sampleEnsembleOutcome, statistics: { ...sampleEnsembleOutcome.statistics!, yield: null } });
    expect(host.querySelector('[data-test=yield]')).toBeNull();
    expect(host.textContent).toContain('No tolerances were stated');
  });
});
