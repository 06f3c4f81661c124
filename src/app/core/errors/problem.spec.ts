import { HttpErrorResponse } from '@angular/common/http';
import { toProblem } from './problem';

describe('toProblem', () => {
  it("keeps the server's JSON problem as it is", () => {
    const err = new HttpErrorResponse({
      status: 409,
      error: { status: 409, code: 'last_admin', message: 'A group needs at least one admin.' },
    });
    expect(toProblem(err)).toEqual({ status: 409, code: 'last_admin', message: 'A group needs at least one admin.' });
  });

  it('words a network failure (status 0) as the server being unreachable', () => {
    const problem = toProblem(new HttpErrorResponse({ status: 0, error: new ProgressEvent('error') }));
    expect(problem.code).toBe('offline');
    expect(problem.message).toContain('cannot be reached');
  });

  it('names the status when the answer is not a problem (a proxy error page)', () => {
    const problem = toProblem(new HttpErrorResponse({ status: 502, statusText: 'Bad Gateway', error: '<html>' }));
    expect(problem.status).toBe(502);
    expect(problem.message).toContain('502 Bad Gateway');
  });
});
