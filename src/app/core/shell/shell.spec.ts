import { provideHttpClient } from '@angular/common/http';
import { provideHttpClientTesting } from '@angular/common/http/testing';
import { Component } from '@angular/core';
import { TestBed } from '@angular/core/testing';
import { Router, provideRouter, withComponentInputBinding } from '@angular/router';
import { RouterTestingHarness } from '@angular/router/testing';
import { demoSession } from '../testing/demo-session';
import { specId } from '../testing/answer-fixtures';
import { settle } from '../testing/next-request';
import { Auth } from '../auth/auth';
import { LaterRelease } from './later-release';
import { Shell } from './shell';

@Component({ template: 'members page' })
class MembersStub {}

describe('Shell', () => {
  let harness: RouterTestingHarness;

  beforeEach(async () => {
    TestBed.configureTestingModule({
      providers: [
        provideHttpClient(),
        provideHttpClientTesting(),
        provideRouter(
          [
            {
              path: '',
              component: Shell,
              children: [
                { path: 'g/:groupSlug/members', component: MembersStub },
                { path: 'g/:groupSlug/runs', component: LaterRelease, data: { area: 'Runs' } },
              ],
            },
          ],
          withComponentInputBinding(),
        ),
      ],
    });
    TestBed.inject(Auth).adopt(demoSession('admin', [{ id: specId('g-quarry'), name: 'Quarry Hill Microwave Group', slug: 'quarry-hill', role: 'viewer' }]));
    harness = await RouterTestingHarness.create();
  });

  it('names the product, and points every area of the navigation at the current group', async () => {
    await harness.navigateByUrl('/g/harrow-lake/members');
    const root = harness.fixture.nativeElement as HTMLElement;
    expect(root.querySelector('mat-toolbar')?.textContent).toContain('Poleward');
    const hrefs = Array.from(root.querySelectorAll<HTMLAnchorElement>('nav[aria-label=Areas] a')).map((a) => a.getAttribute('href'));
    expect(hrefs).toEqual([
      '/g/harrow-lake/dashboard',
      '/g/harrow-lake/models',
      '/g/harrow-lake/runs',
      '/g/harrow-lake/studies',
      '/g/harrow-lake/catalogue',
      '/g/harrow-lake/fits',
      '/g/harrow-lake/review',
      '/g/harrow-lake/fabrication',
      '/g/harrow-lake/members',
    ]);
    await settle();
    harness.detectChanges();
    expect(root.querySelector('nav [aria-current=page]')?.textContent).toContain('Members');
  });

  it('switches group keeping the area the user is in', async () => {
    await harness.navigateByUrl('/g/harrow-lake/members');
    const root = harness.fixture.nativeElement as HTMLElement;
    root.querySelector<HTMLButtonElement>('pw-group-switcher button')!.click();
    harness.detectChanges();
    const items = Array.from(document.querySelectorAll<HTMLButtonElement>('.mat-mdc-menu-panel button[mat-menu-item]'));
    items.find((b) => b.textContent?.includes('Quarry Hill'))!.click();
    await settle();
    expect(TestBed.inject(Router).url).toBe('/g/quarry-hill/members');
  });

  it('shows a plain placeholder for areas of later releases', async () => {
    await harness.navigateByUrl('/g/harrow-lake/runs');
    expect((harness.fixture.nativeElement as HTMLElement).textContent).toContain('Runs arrives in a later release.');
  });
});
