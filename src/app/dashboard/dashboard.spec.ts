import { provideHttpClient, withInterceptors } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { TestBed } from '@angular/core/testing';
import { provideRouter } from '@angular/router';
import { RouterTestingHarness } from '@angular/router/testing';
import { Auth } from '../core/auth/auth';
import { authInterceptor } from '../core/auth/auth-interceptor';
import { demoSession, harrowGroupId } from '../core/testing/demo-session';
import { specId } from '../core/testing/answer-fixtures';
import { nextRequest, settle } from '../core/testing/next-request';
import { Dashboard } from './dashboard';

describe('Dashboard', () => {
  let mock: HttpTestingController;

  beforeEach(() => {
    TestBed.configureTestingModule({
      providers: [
        provideHttpClient(withInterceptors([authInterceptor])),
        provideHttpClientTesting(),
        provideRouter([{ path: 'g/:groupSlug/dashboard', component: Dashboard }]),
      ],
    });
    mock = TestBed.inject(HttpTestingController);
  });

  afterEach(() => mock.verify());

  it("lists the group's recent activity (newest 20) and its members", async () => {
    TestBed.inject(Auth).adopt(demoSession('reviewer'));
    const harness = await RouterTestingHarness.create();
    await harness.navigateByUrl('/g/harrow-lake/dashboard', Dashboard);
    (await nextRequest(mock, `/api/groups/${harrowGroupId}/activity?limit=20`)).flush([
      {
        id: specId('a2'),
        at: '2026-11-30T14:05:00Z',
        actor: { id: specId('u-ada'), name: 'Ada Marlow' },
        action: 'member.role_changed',
        subject: 'Rae Lindqvist',
        details: { userId: specId('u-rae'), from: 'designer', to: 'reviewer' },
      },
      { id: specId('a1'), at: '2026-11-29T08:00:00Z', actor: null, action: 'invitation.created', subject: 'someone@harrow-lake.example', details: {} },
    ]);
    (await nextRequest(mock, `/api/groups/${harrowGroupId}/members`)).flush([
      { userId: specId('u-rae'), email: 'rae.reviewer@harrow-lake.example', name: 'Rae Lindqvist', role: 'reviewer', joinedAt: '2026-01-05T09:00:00Z' },
    ]);
    await settle();
    harness.detectChanges();
    const text = harness.routeNativeElement!.textContent!;
    expect(text).toContain('Harrow Lake Mesoscopics Lab');
    expect(text).toContain('You are reviewer in this group.');
    expect(text).toContain('Ada Marlow');
    expect(text).toContain('changed the role of');
    expect(text).toContain('(designer → reviewer)');
    expect(text).toContain('Someone');
    expect(text).toContain('Rae Lindqvist');
    // Non-admins get the plain members link; only the site operator gets the outbox link.
    expect(text).not.toContain('Manage members');
    expect(text).not.toContain('Mail outbox');
  });

  it('says plainly when the group has no activity yet', async () => {
    TestBed.inject(Auth).adopt(demoSession('admin'));
    const harness = await RouterTestingHarness.create();
    await harness.navigateByUrl('/g/harrow-lake/dashboard', Dashboard);
    (await nextRequest(mock, `/api/groups/${harrowGroupId}/activity?limit=20`)).flush([]);
    (await nextRequest(mock, `/api/groups/${harrowGroupId}/members`)).flush([]);
    await settle();
    harness.detectChanges();
    const text = harness.routeNativeElement!.textContent!;
    expect(text).toContain('Nothing has happened in this group yet.');
    expect(text).toContain('Manage members');
    // An admin of a group is not the site operator: the outbox holds every group's links.
    expect(text).not.toContain('Mail outbox');
  });

  it('shows the site operator the outbox link', async () => {
    TestBed.inject(Auth).adopt({ ...demoSession('admin'), siteOperator: true });
    const harness = await RouterTestingHarness.create();
    await harness.navigateByUrl('/g/harrow-lake/dashboard', Dashboard);
    (await nextRequest(mock, `/api/groups/${harrowGroupId}/activity?limit=20`)).flush([]);
    (await nextRequest(mock, `/api/groups/${harrowGroupId}/members`)).flush([]);
    await settle();
    harness.detectChanges();
    expect(harness.routeNativeElement!.textContent).toContain('Mail outbox');
  });
});
