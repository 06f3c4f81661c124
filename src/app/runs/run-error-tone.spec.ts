import { runErrorTone } from './run-error-tone';

describe('runErrorTone', () => {
  it('shows an interrupted run that is queued again as a retry, a failed one as a failure', () => {
    const lost = 'the worker of attempt 1 stopped answering; the run was put back in the queue';
    expect(runErrorTone({ status: 'queued', error: lost })).toBe('retry');
    expect(runErrorTone({ status: 'running', error: lost })).toBe('retry');
    expect(runErrorTone({ status: 'failed', error: 'out of memory' })).toBe('failure');
    expect(runErrorTone({ status: 'completed', error: null })).toBeNull();
  });
});
