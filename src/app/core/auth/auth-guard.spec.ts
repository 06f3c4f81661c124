import { provideHttpClient, withInterceptors } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { Component } from '@angular/core';
import { TestBed } from '@angular/core/testing';
import { Router, provideRouter } from '@angular/router';
import { authGuard } from './auth-guard';
import { authInterceptor } from './auth-interceptor';
import { nextRequest } from '../testing/next-request';
import { demoSession } from '../testing/demo-session';

@Component({ selector: 'pw-secret-stub', template: 'secret page' })
class Secret {}
@Component({ selector: 'pw-sign-in-stub', template: 'sign-in page' })
class SignInStub {}

describe('authGuard', () => {
  let router: Router;
  let mock: HttpTestingController;

  beforeEach(() => {
    TestBed.configureTestingModule({
      providers: [
        provideHttpClient(withInterceptors([authInterceptor])),
        provideHttpClientTesting(),
        provideRouter([
          { path: 'sign-in', component: SignInStub },
          { path: 'tokens', component: Secret, canActivate: [authGuard] },
        ]),
      ],
    });
    router = TestBed.inject(Router);
    mock = TestBed.inject(HttpTestingController);
  });

  afterEach(() => mock.verify());

  it('redirects to sign-in, keeping the wanted address, when the server says nobody is signed in', async () => {
    const navigation = router.navigateByUrl('/tokens');
    (await nextRequest(mock, '/api/auth/session')).flush(
      { status: 401, code: 'unauthenticated', message: 'Not signed in.' },
      { status: 401, statusText: 'Unauthorized' },
    );
    await navigation;
    expect(router.url).toBe('/sign-in?returnUrl=%2Ftokens');
  });

  it('lets a signed-in user through after asking the server once', async () => {
    const navigation = router.navigateByUrl('/tokens');
    (await nextRequest(mock, '/api/auth/session')).flush(demoSession('viewer'));
    expect(await navigation).toBe(true);
    expect(router.url).toBe('/tokens');

    // A second navigation uses the known session instead of asking again (verify() would catch a request).
    await router.navigateByUrl('/sign-in');
    expect(await router.navigateByUrl('/tokens')).toBe(true);
  });
});
