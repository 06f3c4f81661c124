import { provideHttpClient, withInterceptors } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { Component } from '@angular/core';
import { TestBed } from '@angular/core/testing';
import { Router, provideRouter } from '@angular/router';
import { RouterTestingHarness } from '@angular/router/testing';
import { Auth } from '../core/auth/auth';
import { authInterceptor } from '../core/auth/auth-interceptor';
import { nextRequest, settle } from '../core/testing/next-request';
import { SignIn } from './sign-in';
import { demoSession } from '../core/testing/demo-session';

@Component({ template: 'members page' })
class MembersStub {}

function type(root: HTMLElement, selector: string, value: string): void {
  const input = root.querySelector<HTMLInputElement>(selector)!;
  input.value = value;
  input.dispatchEvent(new Event('input'));
}

describe('SignIn', () => {
  let harness: RouterTestingHarness;
  let mock: HttpTestingController;

  beforeEach(async () => {
    TestBed.configureTestingModule({
      providers: [
        provideHttpClient(withInterceptors([authInterceptor])),
        provideHttpClientTesting(),
        provideRouter([
          { path: 'sign-in', component: SignIn },
          { path: 'g/:groupSlug/members', component: MembersStub },
          { path: '', component: MembersStub },
        ]),
      ],
    });
    mock = TestBed.inject(HttpTestingController);
    harness = await RouterTestingHarness.create();
  });

  afterEach(() => mock.verify());

  async function submit(email: string, password: string): Promise<void> {
    const root = harness.routeNativeElement!;
    type(root, 'input[formControlName=email]', email);
    type(root, 'input[formControlName=password]', password);
    root.querySelector('form')!.dispatchEvent(new Event('submit'));
    harness.detectChanges();
  }

  it("shows the server's own message when the credentials are refused (401)", async () => {
    await harness.navigateByUrl('/sign-in', SignIn);
    await submit('ada.admin@harrow-lake.example', 'not-the-password');
    const req = await nextRequest(mock, '/api/auth/sign-in');
    expect(req.request.method).toBe('POST');
    expect(req.request.body).toEqual({ email: 'ada.admin@harrow-lake.example', password: 'not-the-password' });
    // A message the client does not contain itself: it must come from the response.
    req.flush(
      { status: 401, code: 'invalid_credentials', message: 'E-mail or password is wrong (server wording 7f3).' },
      { status: 401, statusText: 'Unauthorized' },
    );
    await settle();
    await harness.fixture.whenStable();
    const alert = harness.routeNativeElement!.querySelector('[data-testid=sign-in-error]');
    expect(alert?.textContent).toContain('E-mail or password is wrong (server wording 7f3).');
    expect(TestBed.inject(Auth).signedIn()).toBe(false);
  });

  it('does not send the form while the e-mail is not an address', async () => {
    await harness.navigateByUrl('/sign-in', SignIn);
    await submit('ada.admin', 'poleward-demo');
    mock.expectNone('/api/auth/sign-in');
    await settle();
    await harness.fixture.whenStable();
    expect(harness.routeNativeElement!.textContent).toContain('E-mail must be an e-mail address.');
  });

  it('signs in and goes back to the page the user wanted', async () => {
    await harness.navigateByUrl('/sign-in?returnUrl=%2Fg%2Fharrow-lake%2Fmembers', SignIn);
    await submit('ada.admin@harrow-lake.example', 'poleward-demo');
    (await nextRequest(mock, '/api/auth/sign-in')).flush(demoSession('admin'));
    await settle();
    await harness.fixture.whenStable();
    expect(TestBed.inject(Router).url).toBe('/g/harrow-lake/members');
    expect(TestBed.inject(Auth).user()?.name).toBe('Ada Marlow');
  });

  it('ignores a return address that leads off the site', async () => {
    await harness.navigateByUrl('/sign-in?returnUrl=%2F%2Fevil.example%2F', SignIn);
    await submit('ada.admin@harrow-lake.example', 'poleward-demo');
    (await nextRequest(mock, '/api/auth/sign-in')).flush({ ...demoSession('admin'), groups: [] });
    await settle();
    await harness.fixture.whenStable();
    expect(TestBed.inject(Router).url).toBe('/');
  });
});
