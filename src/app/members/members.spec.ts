import { provideHttpClient, withInterceptors } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { TestBed } from '@angular/core/testing';
import { provideRouter } from '@angular/router';
import { RouterTestingHarness } from '@angular/router/testing';
import { Auth } from '../core/auth/auth';
import { authInterceptor } from '../core/auth/auth-interceptor';
import type { Role } from '../../../shared/api/enums';
import { demoSession, harrowGroupId } from '../core/testing/demo-session';
import { answerFixture, specId } from '../core/testing/answer-fixtures';
import { inviteRoute, listMembersRoute } from '../../../shared/api/groups';
import { nextRequest, settle } from '../core/testing/next-request';
import { Members } from './members';

const invitation = answerFixture(inviteRoute, {
  id: specId('i1'),
  email: 'new.student@harrow-lake.example',
  role: 'designer',
  invitedBy: { id: specId('u-ada'), name: 'Ada Marlow' },
  createdAt: '2026-12-01T10:00:00Z',
  expiresAt: '2026-12-08T10:00:00Z',
  status: 'pending',
});

const members = answerFixture(listMembersRoute, [
  { userId: specId('u-ada'), email: 'ada.admin@harrow-lake.example', name: 'Ada Marlow', role: 'admin', joinedAt: '2026-01-05T09:00:00Z' },
  { userId: specId('u-devi'), email: 'dev.designer@harrow-lake.example', name: 'Devi Okafor', role: 'designer', joinedAt: '2026-01-06T09:00:00Z' },
  { userId: specId('u-vic'), email: 'vic.viewer@harrow-lake.example', name: 'Victor Sandoval', role: 'viewer', joinedAt: '2026-02-01T09:00:00Z' },
]);

describe('Members', () => {
  let mock: HttpTestingController;
  let harness: RouterTestingHarness;

  async function open(role: Role): Promise<HTMLElement> {
    TestBed.configureTestingModule({
      providers: [
        provideHttpClient(withInterceptors([authInterceptor])),
        provideHttpClientTesting(),
        provideRouter([{ path: 'g/:groupSlug/members', component: Members }]),
      ],
    });
    mock = TestBed.inject(HttpTestingController);
    TestBed.inject(Auth).adopt(demoSession(role));
    harness = await RouterTestingHarness.create();
    await harness.navigateByUrl('/g/harrow-lake/members', Members);
    (await nextRequest(mock, `/api/groups/${harrowGroupId}/members`)).flush(members);
    if (role === 'admin') (await nextRequest(mock, `/api/groups/${harrowGroupId}/invitations`)).flush([]);
    await settle();
    harness.detectChanges();
    return harness.routeNativeElement!;
  }

  afterEach(() => mock.verify());

  it('shows non-admins the list read-only: no role selects, no remove buttons, no invitation form', async () => {
    const root = await open('designer');
    expect(root.querySelectorAll('[data-testid=member-row]').length).toBe(3);
    expect(root.textContent).toContain('Devi Okafor');
    expect(root.querySelector('[data-testid=role-select]')).toBeNull();
    expect(root.querySelector('[data-testid=remove-member]')).toBeNull();
    expect(root.querySelector('[data-testid=invite-section]')).toBeNull();
    expect(root.textContent).toContain('Only the group');
    // A viewer never asks for the invitations list (admin-only on the server): verify() checks it.
  });

  it('gives admins a role select and a remove button per member, and the invitation form', async () => {
    const root = await open('admin');
    expect(root.querySelectorAll('[data-testid=role-select]').length).toBe(3);
    expect(root.querySelectorAll('[data-testid=remove-member]').length).toBe(3);
    expect(root.querySelector('[data-testid=invite-section]')).not.toBeNull();
  });

  it('sends an invitation with the e-mail and role the admin entered', async () => {
    const root = await open('admin');
    const email = root.querySelector<HTMLInputElement>('[data-testid=invite-section] input[formControlName=email]')!;
    email.value = 'new.student@harrow-lake.example';
    email.dispatchEvent(new Event('input'));
    root.querySelector<HTMLFormElement>('[data-testid=invite-section] form')!.dispatchEvent(new Event('submit'));
    const req = await nextRequest(mock, `/api/groups/${harrowGroupId}/invitations`);
    expect(req.request.method).toBe('POST');
    expect(req.request.body).toEqual({ email: 'new.student@harrow-lake.example', role: 'designer' });
    expect(req.request.headers.get('X-CSRF-Token')).toBe('csrf-test');
    req.flush(invitation, { status: 201, statusText: 'Created' });
    // After sending, both lists are fetched again.
    (await nextRequest(mock, `/api/groups/${harrowGroupId}/members`)).flush(members);
    (await nextRequest(mock, `/api/groups/${harrowGroupId}/invitations`)).flush([invitation]);
    await settle();
    harness.detectChanges();
    expect(root.textContent).toContain('new.student@harrow-lake.example');
  });

  it("puts the server's field issue under the e-mail field", async () => {
    const root = await open('admin');
    const email = root.querySelector<HTMLInputElement>('[data-testid=invite-section] input[formControlName=email]')!;
    email.value = 'devi@harrow-lake.example';
    email.dispatchEvent(new Event('input'));
    root.querySelector<HTMLFormElement>('[data-testid=invite-section] form')!.dispatchEvent(new Event('submit'));
    (await nextRequest(mock, `/api/groups/${harrowGroupId}/invitations`)).flush(
      {
        status: 400,
        code: 'validation_failed',
        message: 'Some fields are not valid.',
        issues: [{ path: 'email', message: 'This address is already a member (server says).' }],
      },
      { status: 400, statusText: 'Bad Request' },
    );
    await settle();
    harness.detectChanges();
    expect(root.querySelector('[data-testid=invite-section] mat-error')?.textContent).toContain('This address is already a member (server says).');
  });
});
