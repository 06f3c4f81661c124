import { provideHttpClient, withInterceptors } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { TestBed } from '@angular/core/testing';
import { provideRouter } from '@angular/router';
import { RouterTestingHarness } from '@angular/router/testing';
import { Auth } from '../core/auth/auth';
import { authInterceptor } from '../core/auth/auth-interceptor';
import { demoSession } from '../core/testing/demo-session';
import { nextRequest, settle } from '../core/testing/next-request';
import { Account } from './account';
import { answerFixture, specId } from '../core/testing/answer-fixtures';
import { accountActivityRoute } from '../../../shared/api/account';

describe('Account', () => {
  let mock: HttpTestingController;

  beforeEach(() => {
    TestBed.configureTestingModule({
      providers: [provideHttpClient(withInterceptors([authInterceptor])), provideHttpClientTesting(), provideRouter([{ path: 'account', component: Account }])],
    });
    mock = TestBed.inject(HttpTestingController);
  });

  afterEach(() => mock.verify());

  it('lists the account activity in words, and points out failures and mail read by the operator', async () => {
    TestBed.inject(Auth).adopt(demoSession('admin'));
    const harness = await RouterTestingHarness.create();
    await harness.navigateByUrl('/account', Account);
    (await nextRequest(mock, '/api/account/notifications')).flush({ kinds: [] });
    (await nextRequest(mock, '/api/account/activity?limit=50')).flush(
      answerFixture(accountActivityRoute, [
        {
          id: specId('e4'),
          at: '2026-12-01T10:04:00Z',
          actor: { id: specId('u-op'), name: 'Ada Marlow' },
          action: 'outbox.read',
          subject: 'Reset your Poleward password',
          details: { messageId: 'm1' },
        },
        {
          id: specId('e3'),
          at: '2026-12-01T10:03:00Z',
          actor: { id: specId('u-ada'), name: 'Ada Marlow' },
          action: 'auth.password_reset',
          subject: 'ada.admin@harrow-lake.example',
          details: { sessionsEnded: 2, tokensRevoked: 1 },
        },
        {
          id: specId('e2'),
          at: '2026-12-01T10:02:00Z',
          actor: null,
          action: 'auth.sign_in_failed',
          subject: 'ada.admin@harrow-lake.example',
          details: { ip: '192.0.2.7' },
        },
        {
          id: specId('e1'),
          at: '2026-12-01T10:01:00Z',
          actor: { id: specId('u-ada'), name: 'Ada Marlow' },
          action: 'auth.signed_in',
          subject: 'ada.admin@harrow-lake.example',
          details: { ip: '127.0.0.1' },
        },
      ]),
    );
    await settle();
    harness.detectChanges();
    const page = harness.routeNativeElement!;
    const items = Array.from(page.querySelectorAll('[data-testid=account-activity] li'));
    expect(items.map((li) => li.querySelector('.what')!.textContent!.trim())).toEqual([
      'The site operator (Ada Marlow) opened mail sent to you: “Reset your Poleward password”',
      'Password changed with a reset link: 2 sessions signed out, 1 API token revoked',
      'Failed sign-in: wrong password',
      'Signed in',
    ]);
    expect(items.map((li) => li.classList.contains('alert'))).toEqual([true, false, true, false]);
    expect(items[2]!.textContent).toContain('from 192.0.2.7');
    expect(page.querySelector('[data-testid=account-alerts]')?.textContent).toContain('2 of these entries deserve a look');
    expect(page.textContent).toContain('ada.admin@harrow-lake.example');
  });

  it('says so when nothing is recorded yet', async () => {
    TestBed.inject(Auth).adopt(demoSession('viewer'));
    const harness = await RouterTestingHarness.create();
    await harness.navigateByUrl('/account', Account);
    (await nextRequest(mock, '/api/account/notifications')).flush({ kinds: [] });
    (await nextRequest(mock, '/api/account/activity?limit=50')).flush([]);
    await settle();
    harness.detectChanges();
    expect(harness.routeNativeElement!.textContent).toContain('Nothing recorded yet.');
  });
});
