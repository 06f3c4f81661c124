import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { TestBed } from '@angular/core/testing';
import { provideRouter } from '@angular/router';
import type { FabricationItem } from '../../../shared/api/fabrication';
import { provideFakeCurrentGroup } from '../core/testing/fake-current-group';
import { settle } from '../core/testing/next-request';
import { FabricationPage } from './fabrication-page';

const base = '/api/groups/g1/resonances/r1/fabrication';
const item: FabricationItem = {
  resonanceId: 'r1',
  state: 'measured',
  reason: 'isolated',
  tolerances: { energyMeV: null, minQuality: null },
  proposedBy: { id: 'u1', name: 'Dee' },
  reviewedBy: { id: 'u2', name: 'Rae' },
  reviewReason: 'ok',
  batch: 'wafer HL-7',
  updatedAt: '2026-12-02T10:00:00Z',
  modelName: 'Harrow dot',
  modelVersion: 2,
  material: 'gaas',
  energy: 4.2,
  width: 0.012,
  lifetimePs: 54.85,
  quality: 350,
  nearThreshold: false,
  overlapping: false,
  thumbnailUrl: null,
  measurement: {
    energy: 4.25,
    width: 0.015,
    energyUncertainty: 0.02,
    widthUncertainty: null,
    source: 'fit',
    fitId: 'f1',
    energyComparison: { predicted: 4.2, measured: 4.25, difference: 0.05, percent: 1.19, uncertainty: 0.02, sigmas: 2.5 },
    widthComparison: { predicted: 0.012, measured: 0.015, difference: 0.003, percent: 25, uncertainty: null, sigmas: null },
    measuredBy: 'Dee',
    measuredAt: '2026-12-02T10:00:00Z',
  },
  downloads: {
    archive: `${base}/package.zip`,
    specSheet: `${base}/spec.pdf`,
    gdsii: `${base}/layout.gds`,
    dxf: `${base}/layout.dxf`,
    svg: `${base}/layout.svg`,
  },
};

describe('FabricationPage', () => {
  it('lists approved work with its downloads, the prediction against the measurement, and, for admins, failed e-mails', async () => {
    TestBed.configureTestingModule({ providers: [provideHttpClient(), provideHttpClientTesting(), provideRouter([]), provideFakeCurrentGroup('admin')] });
    const fixture = TestBed.createComponent(FabricationPage);
    fixture.detectChanges();
    const http = TestBed.inject(HttpTestingController);
    http.expectOne('/api/groups/g1/notifications/failed').flush({
      items: [
        { id: 'n1', kind: 'mentioned', to: 'x@lab.example', subject: 'Hello', attempts: 6, error: '554 relay denied', createdAt: '2026-12-02T09:00:00Z' },
      ],
    });
    http.expectOne('/api/groups/g1/fabrication?state=approved,sent,measured').flush({ items: [item] });
    await settle();
    fixture.detectChanges();
    const host = fixture.nativeElement as HTMLElement;
    const row = host.querySelector('[data-test="fabrication-item"]')!;
    expect(row.textContent).toContain('Measured');
    expect(row.textContent).toContain('wafer HL-7');
    expect(row.querySelector('[data-test="download-gds"]')!.getAttribute('href')).toBe(`${base}/layout.gds`);
    const comparison = host.querySelector('[data-test="comparison"]')!.textContent!;
    expect(comparison).toContain('2.50 σ');
    expect(comparison).toContain('no σ given');
    expect(comparison).toContain('peak fit');
    expect(host.querySelector('[data-test="failed-mail"]')!.textContent).toContain('554 relay denied');

    // "Send again" queues it afresh and takes it off the list.
    (host.querySelector('[data-test="retry-mail"]') as HTMLButtonElement).click();
    const retry = http.expectOne('/api/groups/g1/notifications/n1/retry');
    expect(retry.request.method).toBe('POST');
    retry.flush({ id: 'n1', status: 'queued' });
    await settle();
    fixture.detectChanges();
    expect(host.querySelector('[data-test="failed-mail"]')).toBeNull();
    http.verify();
  });
});
