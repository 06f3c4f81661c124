import { provideHttpClient, withInterceptors } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { TestBed } from '@angular/core/testing';
import { provideRouter, withComponentInputBinding } from '@angular/router';
import { RouterTestingHarness } from '@angular/router/testing';
import { authInterceptor } from '../core/auth/auth-interceptor';
import { nextRequest, settle } from '../core/testing/next-request';
import { ResetPassword } from './reset-password';

function fill(root: HTMLElement, name: string, value: string): void {
  const input = root.querySelector<HTMLInputElement>(`input[formControlName=${name}]`)!;
  input.value = value;
  input.dispatchEvent(new Event('input'));
}

describe('ResetPassword', () => {
  let mock: HttpTestingController;
  let harness: RouterTestingHarness;

  beforeEach(async () => {
    TestBed.configureTestingModule({
      providers: [
        provideHttpClient(withInterceptors([authInterceptor])),
        provideHttpClientTesting(),
        provideRouter([{ path: 'reset-password', component: ResetPassword }], withComponentInputBinding()),
      ],
    });
    mock = TestBed.inject(HttpTestingController);
    harness = await RouterTestingHarness.create();
  });

  afterEach(() => mock.verify());

  it('asks for the e-mail and then says a link may be on its way, whatever the address', async () => {
    await harness.navigateByUrl('/reset-password', ResetPassword);
    const root = harness.routeNativeElement!;
    fill(root, 'email', 'rae.reviewer@harrow-lake.example');
    root.querySelector('form')!.dispatchEvent(new Event('submit'));
    const req = await nextRequest(mock, '/api/auth/password-reset');
    expect(req.request.body).toEqual({ email: 'rae.reviewer@harrow-lake.example' });
    req.flush({ message: 'If the address has an account, a link is on its way.' }, { status: 202, statusText: 'Accepted' });
    await settle();
    harness.detectChanges();
    expect(root.querySelector('[data-testid=reset-requested]')?.textContent).toContain('rae.reviewer@harrow-lake.example');
  });

  it('refuses to send two different new passwords', async () => {
    await harness.navigateByUrl('/reset-password?token=t1', ResetPassword);
    const root = harness.routeNativeElement!;
    fill(root, 'password', 'first-password');
    fill(root, 'repeat', 'second-password');
    root.querySelector('form')!.dispatchEvent(new Event('submit'));
    await settle(2);
    harness.detectChanges();
    mock.expectNone('/api/auth/password-reset/confirm');
    expect(root.textContent).toContain('The two passwords differ.');
  });

  it('sets the new password with the token from the link, and explains a used link (token_invalid)', async () => {
    await harness.navigateByUrl('/reset-password?token=t1', ResetPassword);
    const root = harness.routeNativeElement!;
    fill(root, 'password', 'a-new-password');
    fill(root, 'repeat', 'a-new-password');
    root.querySelector('form')!.dispatchEvent(new Event('submit'));
    const req = await nextRequest(mock, '/api/auth/password-reset/confirm');
    expect(req.request.body).toEqual({ token: 't1', password: 'a-new-password' });
    req.flush({ status: 400, code: 'token_invalid', message: 'x' }, { status: 400, statusText: 'Bad Request' });
    await settle();
    harness.detectChanges();
    expect(root.querySelector('[data-testid=reset-link-invalid]')?.textContent).toContain('already been used or has expired');
    // The request form is offered again so a new link can be asked for.
    expect(root.querySelector('input[formControlName=email]')).not.toBeNull();
  });
});
