import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { TestBed } from '@angular/core/testing';
import { provideRouter } from '@angular/router';
import type { Role } from '../../../shared/api/enums';
import { provideFakeCurrentGroup } from '../core/testing/fake-current-group';
import { RunLauncher } from './run-launcher';

async function render(role: Role) {
  TestBed.configureTestingModule({
    providers: [provideHttpClient(), provideHttpClientTesting(), provideRouter([]), provideFakeCurrentGroup(role)],
  });
  const fixture = TestBed.createComponent(RunLauncher);
  fixture.detectChanges();
  await fixture.whenStable();
  const http = TestBed.inject(HttpTestingController);
  http.expectOne((r) => r.url === '/api/groups/g1/models').flush({ items: [], total: 0 });
  fixture.detectChanges();
  return fixture.nativeElement as HTMLElement;
}

describe('RunLauncher', () => {
  it('shows viewers and reviewers no launch button', async () => {
    for (const role of ['viewer', 'reviewer'] as const) {
      TestBed.resetTestingModule();
      const host = await render(role);
      expect(host.querySelector('[data-test="launch"]')).toBeNull();
    }
  });

  it('shows designers the launch button', async () => {
    const host = await render('designer');
    expect(host.querySelector('[data-test="launch"]')).not.toBeNull();
  });
});
