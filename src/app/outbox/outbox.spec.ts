import { provideHttpClient, withInterceptors } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { TestBed } from '@angular/core/testing';
import { provideRouter, withComponentInputBinding } from '@angular/router';
import { RouterTestingHarness } from '@angular/router/testing';
import { authInterceptor } from '../core/auth/auth-interceptor';
import { nextRequest, settle } from '../core/testing/next-request';
import { Outbox } from './outbox';
import { OutboxMessage } from './outbox-message';
import { specId } from '../core/testing/answer-fixtures';

describe('Outbox', () => {
  let mock: HttpTestingController;
  let harness: RouterTestingHarness;

  beforeEach(async () => {
    TestBed.configureTestingModule({
      providers: [
        provideHttpClient(withInterceptors([authInterceptor])),
        provideHttpClientTesting(),
        provideRouter(
          [
            { path: 'outbox', component: Outbox },
            { path: 'outbox/:messageId', component: OutboxMessage },
          ],
          withComponentInputBinding(),
        ),
      ],
    });
    mock = TestBed.inject(HttpTestingController);
    harness = await RouterTestingHarness.create();
  });

  afterEach(() => mock.verify());

  it('lists the received messages, each leading to its own page', async () => {
    await harness.navigateByUrl('/outbox', Outbox);
    (await nextRequest(mock, '/api/outbox')).flush([
      { id: specId('m1'), to: 'new.student@harrow-lake.example', subject: 'Join Harrow Lake Mesoscopics Lab', receivedAt: '2026-12-01T10:00:00Z' },
    ]);
    await settle();
    harness.detectChanges();
    const link = harness.routeNativeElement!.querySelector<HTMLAnchorElement>('a.message-link')!;
    expect(link.textContent).toContain('Join Harrow Lake Mesoscopics Lab');
    expect(link.getAttribute('href')).toBe(`/outbox/${specId('m1')}`);
  });

  it('explains the 404 anyone but the site operator, or a real mail host, gets', async () => {
    await harness.navigateByUrl('/outbox', Outbox);
    (await nextRequest(mock, '/api/outbox')).flush({ status: 404, code: 'not_found', message: 'Not found.' }, { status: 404, statusText: 'Not Found' });
    await settle();
    harness.detectChanges();
    expect(harness.routeNativeElement!.querySelector('[data-testid=outbox-unavailable]')?.textContent).toContain('only the site operator');
  });

  it('shows a message with its links clickable', async () => {
    await harness.navigateByUrl(`/outbox/${specId('m1')}`, OutboxMessage);
    (await nextRequest(mock, `/api/outbox/${specId('m1')}`)).flush({
      id: specId('m1'),
      to: 'rae.reviewer@harrow-lake.example',
      subject: 'Reset your Poleward password',
      text: 'Open http://127.0.0.1:8640/reset-password?token=xyz within one hour.',
      receivedAt: '2026-12-01T10:00:00Z',
    });
    await settle();
    harness.detectChanges();
    const body = harness.routeNativeElement!.querySelector('[data-testid=message-body]')!;
    const anchor = body.querySelector('a')!;
    expect(anchor.getAttribute('href')).toBe('http://127.0.0.1:8640/reset-password?token=xyz');
    expect(body.textContent).toContain('within one hour.');
  });
});
