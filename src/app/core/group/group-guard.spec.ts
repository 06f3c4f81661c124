import { provideHttpClient } from '@angular/common/http';
import { provideHttpClientTesting } from '@angular/common/http/testing';
import { Component } from '@angular/core';
import { TestBed } from '@angular/core/testing';
import { Router, provideRouter } from '@angular/router';
import { demoSession } from '../testing/demo-session';
import { specId } from '../testing/answer-fixtures';
import { Auth } from '../auth/auth';
import { CurrentGroup } from './current-group';
import { groupGuard } from './group-guard';

@Component({ template: '' })
class Blank {}

describe('groupGuard and CurrentGroup', () => {
  beforeEach(() => {
    TestBed.configureTestingModule({
      providers: [
        provideHttpClient(),
        provideHttpClientTesting(),
        provideRouter([
          { path: 'g/:groupSlug/dashboard', component: Blank, canActivate: [groupGuard] },
          { path: 'not-found', component: Blank },
          { path: 'tokens', component: Blank },
        ]),
      ],
    });
    TestBed.inject(Auth).adopt(demoSession('viewer', [{ id: specId('g-quarry'), name: 'Quarry Hill Microwave Group', slug: 'quarry-hill', role: 'admin' }]));
  });

  it('shows a group the user is not in exactly like a missing page', async () => {
    const router = TestBed.inject(Router);
    await router.navigateByUrl('/g/some-other-lab/dashboard');
    expect(router.url).toBe('/not-found');
  });

  it('follows the group in the URL, and keeps it on pages outside any group', async () => {
    const router = TestBed.inject(Router);
    const current = TestBed.inject(CurrentGroup);
    await router.navigateByUrl('/g/quarry-hill/dashboard');
    expect(current.group()?.name).toBe('Quarry Hill Microwave Group');
    expect(current.isAdmin()).toBe(true);
    await router.navigateByUrl('/tokens');
    expect(current.slug()).toBe('quarry-hill');
    await router.navigateByUrl('/g/harrow-lake/dashboard');
    expect(current.isAdmin()).toBe(false);
  });
});
