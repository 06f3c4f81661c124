import { provideHttpClient, withInterceptors } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { Component } from '@angular/core';
import { TestBed } from '@angular/core/testing';
import { provideRouter } from '@angular/router';
import { RouterTestingHarness } from '@angular/router/testing';
import { authInterceptor } from '../core/auth/auth-interceptor';
import { nextRequest, settle } from '../core/testing/next-request';
import { Tokens } from './tokens';
import { specId } from '../core/testing/answer-fixtures';

@Component({ template: 'elsewhere' })
class Elsewhere {}

describe('Tokens', () => {
  let mock: HttpTestingController;

  beforeEach(() => {
    TestBed.configureTestingModule({
      providers: [
        provideHttpClient(withInterceptors([authInterceptor])),
        provideHttpClientTesting(),
        provideRouter([
          { path: 'tokens', component: Tokens },
          { path: 'elsewhere', component: Elsewhere },
        ]),
      ],
    });
    mock = TestBed.inject(HttpTestingController);
  });

  afterEach(() => mock.verify());

  it('shows a new token once, with a curl example that uses it, and forgets it on leaving', async () => {
    const harness = await RouterTestingHarness.create();
    await harness.navigateByUrl('/tokens', Tokens);
    (await nextRequest(mock, '/api/tokens')).flush([]);
    await settle();
    harness.detectChanges();
    const root = harness.routeNativeElement!;
    expect(root.textContent).toContain('You have no API tokens.');

    const input = root.querySelector<HTMLInputElement>('input[formControlName=name]')!;
    input.value = 'sweep script';
    input.dispatchEvent(new Event('input'));
    root.querySelector('form')!.dispatchEvent(new Event('submit'));
    const req = await nextRequest(mock, '/api/tokens');
    expect(req.request.method).toBe('POST');
    expect(req.request.body).toEqual({ name: 'sweep script' });
    req.flush({ id: specId('t1'), name: 'sweep script', token: 'pwt_secret123', createdAt: '2026-12-01T10:00:00Z' }, { status: 201, statusText: 'Created' });
    (await nextRequest(mock, '/api/tokens')).flush([{ id: specId('t1'), name: 'sweep script', createdAt: '2026-12-01T10:00:00Z', lastUsedAt: null }]);
    await settle();
    harness.detectChanges();

    expect(root.querySelector('[data-testid=token-value]')?.textContent).toContain('pwt_secret123');
    const curl = root.querySelector('[data-testid=curl-example]')?.textContent ?? '';
    expect(curl).toContain("-H 'Authorization: Bearer pwt_secret123'");
    expect(curl).toContain('/api/groups');

    // Coming back to the page lists the token by name only: the secret is gone.
    await harness.navigateByUrl('/elsewhere', Elsewhere);
    await harness.navigateByUrl('/tokens', Tokens);
    (await nextRequest(mock, '/api/tokens')).flush([{ id: specId('t1'), name: 'sweep script', createdAt: '2026-12-01T10:00:00Z', lastUsedAt: null }]);
    await settle();
    harness.detectChanges();
    expect(harness.routeNativeElement!.textContent).toContain('sweep script');
    expect(harness.routeNativeElement!.textContent).not.toContain('pwt_secret123');
    expect(harness.routeNativeElement!.querySelector('[data-testid=created-token]')).toBeNull();
  });
});
