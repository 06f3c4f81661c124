import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { TestBed } from '@angular/core/testing';
import { settle } from '../testing/next-request';
import { NotificationSettings } from './notification-settings';

const kinds = (off: string[]) => ({
  kinds: ['candidate_proposed', 'candidate_decided', 'mentioned'].map((kind) => ({ kind, label: `label ${kind}`, enabled: !off.includes(kind) })),
});

describe('NotificationSettings', () => {
  it('shows each kind and turns one off with a PUT naming only that kind', async () => {
    TestBed.configureTestingModule({ providers: [provideHttpClient(), provideHttpClientTesting()] });
    const fixture = TestBed.createComponent(NotificationSettings);
    const http = TestBed.inject(HttpTestingController);
    http.expectOne('/api/account/notifications').flush(kinds([]));
    await settle();
    fixture.detectChanges();
    const host = fixture.nativeElement as HTMLElement;
    expect(host.textContent).toContain('label mentioned');
    host.querySelector<HTMLButtonElement>('[data-kind="mentioned"] button')!.click();
    const req = http.expectOne('/api/account/notifications');
    expect(req.request.method).toBe('PUT');
    expect(req.request.body).toEqual({ enabled: { mentioned: false } });
    req.flush(kinds(['mentioned']));
  });
});
