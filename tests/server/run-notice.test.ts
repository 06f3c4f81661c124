import { describe, expect, it } from 'vitest';
import { runNotice, WAITING_NOTICE_SECONDS } from '../../server/runs/run-notice.js';

const t0 = new Date('2026-01-01T10:00:00Z');
const at = (seconds: number) => t0.getTime() + seconds * 1000;

describe('the notice of a run that looks stuck', () => {
  it('says nothing while a queued run has waited less than the threshold', () => {
    expect(runNotice({ status: 'queued', createdAt: t0, heartbeatAt: null }, at(WAITING_NOTICE_SECONDS - 1))).toBeNull();
  });

  it('tells the owner of a long-waiting queued run what is happening and what to do', () => {
    const n = runNotice({ status: 'queued', createdAt: t0, heartbeatAt: null }, at(5 * 60));
    expect(n).toMatch(/No worker has taken this run for 5 min/);
    expect(n).toMatch(/tell whoever runs the Poleward server/);
  });

  it('counts the wait of a handed-on run from its last heartbeat', () => {
    const beat = new Date(at(600));
    expect(runNotice({ status: 'queued', createdAt: t0, heartbeatAt: beat }, at(600 + 30))).toBeNull();
    expect(runNotice({ status: 'queued', createdAt: t0, heartbeatAt: beat }, at(600 + 180))).toMatch(/for 3 min/);
  });

  it('warns when a running run has a silent worker, and not before the stale age', () => {
    const beat = new Date(at(0));
    expect(runNotice({ status: 'running', createdAt: t0, heartbeatAt: beat }, at(10), 30)).toBeNull();
    expect(runNotice({ status: 'running', createdAt: t0, heartbeatAt: beat }, at(45), 30)).toMatch(
      /has not reported for 45 s; the run will be handed to another worker/,
    );
  });

  it('says nothing for a finished run', () => {
    expect(runNotice({ status: 'completed', createdAt: t0, heartbeatAt: null }, at(1e6))).toBeNull();
  });
});
