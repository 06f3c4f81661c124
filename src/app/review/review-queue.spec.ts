import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { signal } from '@angular/core';
import { TestBed } from '@angular/core/testing';
import { provideRouter } from '@angular/router';
import { type FabricationItem, moveFabricationRoute } from '../../../shared/api/fabrication';
import { answerFixture } from '../core/testing/answer-fixtures';
import { Auth } from '../core/auth/auth';
import { provideFakeCurrentGroup } from '../core/testing/fake-current-group';
import { settle } from '../core/testing/next-request';
import { ReviewQueue } from './review-queue';

function item(id: string, proposer: string): FabricationItem {
  return {
    resonanceId: id,
    state: 'candidate',
    reason: `reason of ${id}`,
    tolerances: { energyMeV: 0.05, minQuality: null },
    proposedBy: { id: proposer, name: proposer === 'u-ada' ? 'Ada Marlow' : 'Dee Signer' },
    reviewedBy: null,
    reviewReason: null,
    batch: null,
    updatedAt: '2026-12-02T10:00:00Z',
    modelName: 'Harrow dot',
    modelVersion: 2,
    material: 'GaAs',
    energy: 4.2,
    width: 0.012,
    lifetimePs: 54.85,
    quality: 350,
    nearThreshold: id === 'r2',
    overlapping: false,
    thumbnailUrl: `/api/groups/g1/resonances/${id}/mode.png?size=thumb`,
    measurement: null,
    downloads: null,
  };
}

describe('ReviewQueue', () => {
  it('lists candidates with the reason; the proposer cannot decide on their own; reject sends the reason', async () => {
    TestBed.configureTestingModule({
      providers: [
        provideHttpClient(),
        provideHttpClientTesting(),
        provideRouter([]),
        provideFakeCurrentGroup('admin'),
        { provide: Auth, useValue: { user: signal({ id: 'u-ada', email: 'ada@x', name: 'Ada Marlow' }) } },
      ],
    });
    const fixture = TestBed.createComponent(ReviewQueue);
    fixture.detectChanges();
    const http = TestBed.inject(HttpTestingController);
    http.expectOne('/api/groups/g1/fabrication?state=candidate,under_review').flush({ items: [item('r1', 'u-dee'), item('r2', 'u-ada')] });
    await settle();
    fixture.detectChanges();
    const host = fixture.nativeElement as HTMLElement;
    const cards = host.querySelectorAll('[data-test="candidate"]');
    expect(cards).toHaveLength(2);
    expect(cards[0]!.textContent).toContain('reason of r1');
    expect(cards[0]!.querySelector('[data-test="approve"]')).not.toBeNull();
    expect(cards[1]!.querySelector('[data-test="approve"]')).toBeNull();
    expect(cards[1]!.textContent).toContain('another reviewer decides');
    expect(cards[1]!.textContent).toContain('Near a channel threshold');

    const reason = cards[0]!.querySelector<HTMLTextAreaElement>('[data-test="review-reason"]')!;
    reason.value = 'too close to the gate';
    reason.dispatchEvent(new Event('input'));
    cards[0]!.querySelector<HTMLButtonElement>('[data-test="reject"]')!.click();
    const req = http.expectOne('/api/groups/g1/resonances/r1/fabrication');
    expect(req.request.body).toEqual({ action: 'reject', reason: 'too close to the gate' });
    req.flush(
      answerFixture(moveFabricationRoute, {
        resonanceId: 'r1',
        state: 'rejected',
        reason: 'reason of r1',
        tolerances: { energyMeV: 0.05, minQuality: null },
        proposedBy: { id: 'u-dee', name: 'Dee Signer' },
        proposedAt: '2026-12-02T10:00:00Z',
        reviewedBy: { id: 'u-ada', name: 'Ada Marlow' },
        reviewedAt: '2026-12-02T11:00:00Z',
        reviewReason: 'too close to the gate',
        batch: null,
        sentAt: null,
        measurement: null,
        updatedAt: '2026-12-02T11:00:00Z',
        allowedActions: [],
        history: [],
      }),
    );
    await settle();
    fixture.detectChanges();
    expect(host.querySelectorAll('[data-test="candidate"]')).toHaveLength(1);
  });
});
