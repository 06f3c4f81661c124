// The back-off of scripts/child-supervisor.ts (what `npm start` uses to restart a dead
// API or worker), with real child processes that die on purpose.
import { describe, expect, it } from 'vitest';
import { restartDelaySeconds, superviseChildren } from '../../scripts/child-supervisor.js';
import { waitFor } from './wait-for.js';

describe('restarting dead children with back-off', () => {
  it('doubles the wait after each quick death, up to the cap', () => {
    const b = { firstSeconds: 1, maxSeconds: 30, stableSeconds: 60 };
    expect([1, 2, 3, 4, 5, 6, 7].map((k) => restartDelaySeconds(k, b))).toEqual([1, 2, 4, 8, 16, 30, 30]);
  });

  it('restarts a crashing child with growing waits, logs each exit, keeps the others, and stops cleanly', async () => {
    const lines: string[] = [];
    const sup = superviseChildren(
      [
        { name: 'crasher', command: process.execPath, args: ['-e', 'process.exit(3)'] },
        { name: 'steady', command: process.execPath, args: ['-e', 'setInterval(() => {}, 1000)'] },
      ],
      { backOff: { firstSeconds: 0.1, maxSeconds: 0.4, stableSeconds: 60 }, log: (l) => lines.push(l), spawnOptions: { stdio: 'ignore' } },
    );
    const steady = await waitFor('the steady child', async () => sup.pid('steady'), 10);
    await waitFor('four restarts', async () => sup.restarts('crasher') >= 4, 30);
    expect(lines[0]).toMatch(/^crasher \(pid \d+\) stopped \(exit code 3\) after [\d.]+ s; restarting in 0\.1 s \(restart 1\)/);
    expect(lines[1]).toMatch(/restarting in 0\.2 s \(restart 2\)/);
    expect(lines[2]).toMatch(/restarting in 0\.4 s \(restart 3\)/);
    expect(lines[3]).toMatch(/restarting in 0\.4 s \(restart 4\)/);
    expect(sup.pid('steady')).toBe(steady);
    expect(sup.restarts('steady')).toBe(0);
    await sup.stop(2000);
    expect(() => process.kill(steady, 0)).toThrow();
    const after = lines.length;
    await new Promise((r) => setTimeout(r, 600));
    expect(lines.length).toBe(after);
  });

  it('starts the back-off again for a child that ran longer than the stable period', async () => {
    const lines: string[] = [];
    const sup = superviseChildren([{ name: 'slow', command: process.execPath, args: ['-e', 'setTimeout(() => process.exit(1), 300)'] }], {
      backOff: { firstSeconds: 0.1, maxSeconds: 10, stableSeconds: 0.2 },
      log: (l) => lines.push(l),
      spawnOptions: { stdio: 'ignore' },
    });
    await waitFor('three restarts', async () => sup.restarts('slow') >= 3, 30);
    await sup.stop();
    for (const l of lines.slice(0, 3)) expect(l).toMatch(/restarting in 0\.1 s/);
  });
});
