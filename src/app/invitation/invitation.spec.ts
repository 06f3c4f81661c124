import { provideHttpClient, withInterceptors } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { Component } from '@angular/core';
import { TestBed } from '@angular/core/testing';
import { Router, provideRouter, withComponentInputBinding } from '@angular/router';
import { RouterTestingHarness } from '@angular/router/testing';
import { Auth } from '../core/auth/auth';
import { authInterceptor } from '../core/auth/auth-interceptor';
import { nextRequest, settle } from '../core/testing/next-request';
import { Invitation } from './invitation';
import { demoSession } from '../core/testing/demo-session';
import { specId } from '../core/testing/answer-fixtures';

@Component({ template: 'dashboard' })
class DashboardStub {}

describe('Invitation', () => {
  let mock: HttpTestingController;
  let harness: RouterTestingHarness;

  beforeEach(async () => {
    TestBed.configureTestingModule({
      providers: [
        provideHttpClient(withInterceptors([authInterceptor])),
        provideHttpClientTesting(),
        provideRouter(
          [
            { path: 'invitation', component: Invitation },
            { path: 'g/:groupSlug/dashboard', component: DashboardStub },
          ],
          withComponentInputBinding(),
        ),
      ],
    });
    mock = TestBed.inject(HttpTestingController);
    harness = await RouterTestingHarness.create();
  });

  afterEach(() => mock.verify());

  it('shows group and role, then creates the account and signs in', async () => {
    await harness.navigateByUrl('/invitation?token=tok-1', Invitation);
    (await nextRequest(mock, '/api/invitations/tok-1')).flush({
      email: 'new.student@harrow-lake.example',
      groupName: 'Harrow Lake Mesoscopics Lab',
      role: 'designer',
      invitedBy: 'Ada Marlow',
    });
    await settle();
    harness.detectChanges();
    const root = harness.routeNativeElement!;
    const offer = root.querySelector('[data-testid=invitation-offer]')!.textContent!;
    expect(offer).toContain('Ada Marlow invites you');
    expect(offer).toContain('Harrow Lake Mesoscopics Lab');
    expect(offer).toContain('designer');

    for (const [name, value] of [
      ['name', 'Noor Haddad'],
      ['password', 'long-enough-pass'],
    ]) {
      const input = root.querySelector<HTMLInputElement>(`input[formControlName=${name}]`)!;
      input.value = value;
      input.dispatchEvent(new Event('input'));
    }
    root.querySelector('form')!.dispatchEvent(new Event('submit'));
    const req = await nextRequest(mock, '/api/invitations/tok-1/accept');
    expect(req.request.body).toEqual({ name: 'Noor Haddad', password: 'long-enough-pass' });
    req.flush(
      {
        ...demoSession('designer'),
        user: { id: specId('u-noor'), email: 'new.student@harrow-lake.example', name: 'Noor Haddad' },
      },
      { status: 201, statusText: 'Created' },
    );
    await settle();
    expect(TestBed.inject(Auth).user()?.name).toBe('Noor Haddad');
    expect(TestBed.inject(Router).url).toBe('/g/harrow-lake/dashboard');
  });

  it('explains a used or expired link (410) instead of showing the form', async () => {
    await harness.navigateByUrl('/invitation?token=old', Invitation);
    (await nextRequest(mock, '/api/invitations/old')).flush({ status: 410, code: 'gone', message: 'gone' }, { status: 410, statusText: 'Gone' });
    await settle();
    harness.detectChanges();
    const root = harness.routeNativeElement!;
    expect(root.querySelector('[data-testid=invitation-gone]')?.textContent).toContain('already been used or has expired');
    expect(root.querySelector('form')).toBeNull();
  });
});
