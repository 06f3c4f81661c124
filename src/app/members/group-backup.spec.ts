import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { TestBed } from '@angular/core/testing';
import { MatDialog } from '@angular/material/dialog';
import { of } from 'rxjs';
import { provideFakeCurrentGroup } from '../core/testing/fake-current-group';
import { GroupBackup } from './group-backup';

function setUp(confirm: boolean) {
  const opened: unknown[] = [];
  TestBed.configureTestingModule({
    providers: [
      provideHttpClient(),
      provideHttpClientTesting(),
      provideFakeCurrentGroup('admin'),
      { provide: MatDialog, useValue: { open: (_c: unknown, cfg: { data: unknown }) => (opened.push(cfg.data), { afterClosed: () => of(confirm) }) } },
    ],
  });
  const fixture = TestBed.createComponent(GroupBackup);
  fixture.detectChanges();
  return { fixture, host: fixture.nativeElement as HTMLElement, http: TestBed.inject(HttpTestingController), opened };
}

function choose(host: HTMLElement, file: File) {
  const input = host.querySelector<HTMLInputElement>('[data-test="backup-file"]')!;
  Object.defineProperty(input, 'files', { value: [file], configurable: true });
  input.dispatchEvent(new Event('change'));
}

describe('GroupBackup', () => {
  it('links the download, with or without the member list', async () => {
    const { fixture, host } = setUp(true);
    const link = () => host.querySelector<HTMLAnchorElement>('[data-test="backup-download"]')!;
    expect(link().getAttribute('href')).toBe('/api/groups/g1/backup?members=true');
    expect(link().hasAttribute('download')).toBe(true);
    host.querySelector<HTMLInputElement>('[data-test="backup-members"] input')!.click();
    fixture.detectChanges();
    await fixture.whenStable();
    expect(link().getAttribute('href')).toBe('/api/groups/g1/backup?members=false');
  });

  it('asks before restoring, sends the file as gzip, and shows where a refused file is wrong', async () => {
    const { fixture, host, http, opened } = setUp(true);
    const file = new File([new Uint8Array([0x1f, 0x8b])], 'lab.jsonl.gz', { type: 'application/gzip' });
    choose(host, file);
    await fixture.whenStable();
    expect(opened).toHaveLength(1);
    expect((opened[0] as { title: string }).title).toBe('Restore lab.jsonl.gz into Lab?');
    const req = http.expectOne('/api/groups/g1/restore');
    expect(req.request.method).toBe('POST');
    expect(req.request.headers.get('Content-Type')).toBe('application/gzip');
    expect(req.request.body).toBe(file);
    req.flush(
      {
        status: 400,
        code: 'invalid_backup',
        message: 'The backup was not restored: 1 problem(s) found. Nothing was written.',
        issues: [{ path: 'line 12 (resonance) energy', message: 'Expected number' }],
      },
      { status: 400, statusText: 'Bad Request' },
    );
    await fixture.whenStable();
    fixture.detectChanges();
    const problem = host.querySelector('[data-test="backup-problem"]')!;
    expect(problem.textContent).toContain('Nothing was written.');
    expect(problem.textContent).toContain('line 12 (resonance) energy');
    http.verify();
  });

  it('sends nothing when the admin says no', async () => {
    const { fixture, host, http } = setUp(false);
    choose(host, new File(['x'], 'lab.jsonl.gz'));
    await fixture.whenStable();
    http.expectNone('/api/groups/g1/restore');
    http.verify();
  });
});
