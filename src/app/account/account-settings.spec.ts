import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { TestBed } from '@angular/core/testing';
import { provideRouter } from '@angular/router';
import { Auth } from '../core/auth/auth';
import { demoSession } from '../core/testing/demo-session';
import { AccountSettings } from './account-settings';

function setUp() {
  TestBed.configureTestingModule({ providers: [provideHttpClient(), provideHttpClientTesting(), provideRouter([])] });
  TestBed.inject(Auth).adopt(demoSession('designer'));
  const fixture = TestBed.createComponent(AccountSettings);
  fixture.detectChanges();
  return { fixture, http: TestBed.inject(HttpTestingController), host: fixture.nativeElement as HTMLElement };
}

function type(host: HTMLElement, test: string, value: string) {
  const input = host.querySelector<HTMLInputElement>(`[data-test="${test}"]`)!;
  input.value = value;
  input.dispatchEvent(new Event('input'));
}

describe('AccountSettings', () => {
  it('shows the e-mail and saves a new name', () => {
    const { fixture, http, host } = setUp();
    expect(host.querySelector('[data-test="email"]')!.textContent).toContain(demoSession('designer').user.email);
    type(host, 'name', 'Ada M.');
    fixture.detectChanges();
    (host.querySelector('[data-test="save-name"]') as HTMLButtonElement).click();
    const req = http.expectOne('/api/account');
    expect(req.request.method).toBe('PATCH');
    expect(req.request.body).toEqual({ name: 'Ada M.' });
    req.flush({ id: 'u', email: 'x@example', name: 'Ada M.' });
    http.match(() => true);
  });

  it('asks for the current password and shows the server saying it is wrong under that field', async () => {
    const { fixture, http, host } = setUp();
    const button = () => host.querySelector('[data-test="change-password"]') as HTMLButtonElement;
    type(host, 'new-password', 'brand-new-pass');
    type(host, 'repeat-password', 'brand-new-pass');
    fixture.detectChanges();
    // Without the current password the form does not send.
    expect(button().disabled).toBe(true);
    type(host, 'current-password', 'not-it');
    fixture.detectChanges();
    button().click();
    const req = http.expectOne('/api/account/password');
    expect(req.request.body).toEqual({ currentPassword: 'not-it', newPassword: 'brand-new-pass' });
    req.flush(
      {
        status: 400,
        code: 'wrong_password',
        message: 'The current password is wrong; nothing was changed.',
        issues: [{ path: 'currentPassword', message: 'the current password is wrong' }],
      },
      { status: 400, statusText: 'Bad Request' },
    );
    fixture.detectChanges();
    await fixture.whenStable();
    const field = host.querySelector('[data-test="current-password"]')!.closest('mat-form-field')!;
    expect(field.textContent).toContain('The current password is wrong.');
  });

  it('refuses a repeat that differs from the new password', () => {
    const { fixture, host } = setUp();
    type(host, 'current-password', 'old-one-123');
    type(host, 'new-password', 'brand-new-pass');
    type(host, 'repeat-password', 'brand-new-pasS');
    fixture.detectChanges();
    expect((host.querySelector('[data-test="change-password"]') as HTMLButtonElement).disabled).toBe(true);
  });
});
