import { HttpClient, provideHttpClient, withInterceptors } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { Component } from '@angular/core';
import { TestBed } from '@angular/core/testing';
import { Router, provideRouter } from '@angular/router';
import { firstValueFrom } from 'rxjs';
import { Auth } from './auth';
import { authInterceptor } from './auth-interceptor';
import type { Session } from '../../../../shared/api/auth';

@Component({ template: '' })
class Blank {}

const session: Session = {
  user: { id: 'u1', email: 'ada.admin@harrow-lake.example', name: 'Ada Marlow' },
  groups: [{ id: 'g1', name: 'Harrow Lake Mesoscopics Lab', slug: 'harrow-lake', role: 'admin' }],
  csrfToken: 'from-session',
  siteOperator: false,
};

describe('authInterceptor', () => {
  let http: HttpClient;
  let mock: HttpTestingController;

  beforeEach(() => {
    TestBed.configureTestingModule({
      providers: [
        provideHttpClient(withInterceptors([authInterceptor])),
        provideHttpClientTesting(),
        provideRouter([
          { path: 'sign-in', component: Blank },
          { path: '**', component: Blank },
        ]),
      ],
    });
    http = TestBed.inject(HttpClient);
    mock = TestBed.inject(HttpTestingController);
    TestBed.inject(Auth).adopt(session);
  });

  afterEach(() => {
    mock.verify();
    document.cookie = 'pw_csrf=; expires=Thu, 01 Jan 1970 00:00:00 GMT; path=/';
  });

  it('adds X-CSRF-Token from the pw_csrf cookie on POST, PATCH and DELETE', () => {
    document.cookie = 'pw_csrf=cookie-value; path=/';
    http.post('/api/tokens', { name: 'x' }).subscribe();
    http.patch('/api/groups/g1/members/u2', { role: 'viewer' }).subscribe();
    http.delete('/api/tokens/t1').subscribe();
    for (const req of mock.match(() => true)) {
      expect(req.request.headers.get('X-CSRF-Token')).toBe('cookie-value');
      expect(req.request.withCredentials).toBe(true);
      req.flush({});
    }
  });

  it('falls back to the session copy of the token when no cookie is readable', () => {
    http.post('/api/tokens', { name: 'x' }).subscribe();
    const req = mock.expectOne('/api/tokens');
    expect(req.request.headers.get('X-CSRF-Token')).toBe('from-session');
    req.flush({});
  });

  it('sends no CSRF header on GET, but still sends credentials', () => {
    document.cookie = 'pw_csrf=cookie-value; path=/';
    http.get('/api/groups').subscribe();
    const req = mock.expectOne('/api/groups');
    expect(req.request.headers.has('X-CSRF-Token')).toBe(false);
    expect(req.request.withCredentials).toBe(true);
    req.flush([]);
  });

  it('on 401 from an ordinary endpoint forgets the session and routes to sign-in with a return address', async () => {
    const router = TestBed.inject(Router);
    await router.navigateByUrl('/g/harrow-lake/members');
    const failed = firstValueFrom(http.get('/api/groups/g1/members')).catch((e: unknown) => e);
    mock
      .expectOne('/api/groups/g1/members')
      .flush({ status: 401, code: 'unauthenticated', message: 'Sign in again.' }, { status: 401, statusText: 'Unauthorized' });
    await failed;
    await TestBed.inject(Router).navigated;
    await new Promise((r) => setTimeout(r));
    expect(TestBed.inject(Auth).signedIn()).toBe(false);
    expect(router.url).toBe('/sign-in?returnUrl=%2Fg%2Fharrow-lake%2Fmembers');
  });

  it('leaves a 401 from the auth endpoints (wrong password) to the page that asked', async () => {
    const router = TestBed.inject(Router);
    await router.navigateByUrl('/somewhere');
    const failed = firstValueFrom(http.post('/api/auth/sign-in', {})).catch((e: unknown) => e);
    mock
      .expectOne('/api/auth/sign-in')
      .flush({ status: 401, code: 'invalid_credentials', message: 'E-mail or password is wrong.' }, { status: 401, statusText: 'Unauthorized' });
    await failed;
    await new Promise((r) => setTimeout(r));
    expect(router.url).toBe('/somewhere');
    expect(TestBed.inject(Auth).signedIn()).toBe(true);
  });
});
