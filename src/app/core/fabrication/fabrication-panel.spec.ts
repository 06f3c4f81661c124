import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { TestBed } from '@angular/core/testing';
import type { FabricationRecord } from '../../../../shared/api/fabrication';
import type { Role } from '../../../../shared/api/enums';
import { provideFakeCurrentGroup } from '../testing/fake-current-group';
import { settle } from '../testing/next-request';
import { FabricationPanel } from './fabrication-panel';

const base = '/api/groups/g1/resonances/r1';

function record(over: Partial<FabricationRecord>): FabricationRecord {
  return {
    resonanceId: 'r1',
    state: 'candidate',
    reason: 'narrow and isolated',
    tolerances: { energyMeV: 0.05, minQuality: 300 },
    proposedBy: { id: 'u-dee', name: 'Dee Signer' },
    proposedAt: '2026-12-01T10:00:00Z',
    reviewedBy: null,
    reviewedAt: null,
    reviewReason: null,
    batch: null,
    sentAt: null,
    measurement: null,
    updatedAt: '2026-12-01T10:00:00Z',
    allowedActions: ['start_review', 'approve', 'reject'],
    history: [{ at: '2026-12-01T10:00:00Z', action: 'propose', actor: 'Dee Signer', from: null, to: 'candidate', reason: 'narrow and isolated' }],
    ...over,
  };
}

async function setUp(role: Role, rec: FabricationRecord) {
  TestBed.configureTestingModule({ providers: [provideHttpClient(), provideHttpClientTesting(), provideFakeCurrentGroup(role)] });
  const fixture = TestBed.createComponent(FabricationPanel);
  fixture.componentRef.setInput('resonanceId', 'r1');
  fixture.detectChanges();
  const http = TestBed.inject(HttpTestingController);
  http.expectOne(`${base}/fabrication`).flush(rec);
  http.expectOne(`${base}/comments`).flush({ items: [] });
  if (role !== 'viewer') http.expectOne('/api/groups/g1/members').flush([]);
  await settle();
  fixture.detectChanges();
  return { fixture, host: fixture.nativeElement as HTMLElement, http };
}

describe('FabricationPanel', () => {
  it('shows the state, the tolerances and only the moves the server allows; approve sends the reason', async () => {
    const { fixture, host, http } = await setUp('reviewer', record({}));
    expect(host.querySelector('[data-test="fabrication-state"]')!.textContent).toContain('Candidate');
    expect(host.textContent).toContain('narrow and isolated');
    const buttons = Array.from(host.querySelectorAll('[data-test^="move-"]')).map((b) => b.getAttribute('data-test'));
    expect(buttons).toEqual(['move-start_review', 'move-approve', 'move-reject']);
    expect(host.querySelector('[data-test="downloads"]')).toBeNull();

    const reason = host.querySelector<HTMLTextAreaElement>('[data-test="decision-reason"]')!;
    reason.value = 'fits the process window';
    reason.dispatchEvent(new Event('input'));
    host.querySelector<HTMLButtonElement>('[data-test="move-approve"]')!.click();
    const req = http.expectOne(`${base}/fabrication`);
    expect(req.request.method).toBe('POST');
    expect(req.request.body).toEqual({ action: 'approve', reason: 'fits the process window' });
    req.flush(
      record({
        state: 'approved',
        allowedActions: ['send'],
        reviewedBy: { id: 'u-ada', name: 'Ada Marlow' },
        reviewedAt: '2026-12-02T10:00:00Z',
        reviewReason: 'fits the process window',
      }),
    );
    await settle();
    fixture.detectChanges();
    expect(host.querySelector('[data-test="fabrication-state"]')!.textContent).toContain('Approved');
    const gds = host.querySelector<HTMLAnchorElement>('[data-test="download-gds"]')!;
    expect(gds.getAttribute('href')).toBe('/api/groups/g1/resonances/r1/fabrication/layout.gds');
  });

  it('gives a viewer the downloads and the comparison, but no moves and no comment box', async () => {
    const measurement = {
      energy: 4.25,
      width: 0.015,
      energyUncertainty: 0.02,
      widthUncertainty: null,
      source: 'typed' as const,
      fitId: null,
      energyComparison: { predicted: 4.2, measured: 4.25, difference: 0.05, percent: 1.19, uncertainty: 0.02, sigmas: 2.5 },
      widthComparison: { predicted: 0.012, measured: 0.015, difference: 0.003, percent: 25, uncertainty: null, sigmas: null },
      measuredBy: 'Dee Signer',
      measuredAt: '2026-12-02T10:00:00Z',
    };
    const { host } = await setUp('viewer', record({ state: 'measured', allowedActions: [], measurement }));
    expect(host.querySelectorAll('[data-test^="move-"]')).toHaveLength(0);
    expect(host.querySelector('[data-test="comment-text"]')).toBeNull();
    expect(host.querySelector('[data-test="download-package"]')).not.toBeNull();
    const table = host.querySelector('[data-test="measurement"]')!.textContent!;
    expect(table).toContain('2.50 σ');
    expect(table).toContain('no σ given');
  });
});
