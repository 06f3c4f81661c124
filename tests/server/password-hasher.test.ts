// Password hashing runs in worker threads, not on the API's event loop.
import bcrypt from 'bcryptjs';
import { monitorEventLoopDelay } from 'node:perf_hooks';
import { describe, expect, it } from 'vitest';
import { hashPassword, verifyPassword } from '../../server/auth/password.js';
import { passwordPool } from '../../server/auth/password-hasher.js';

describe('password hashing off the event loop', () => {
  it('hashes and verifies in the thread pool, with hashes bcryptjs itself accepts', async () => {
    const before = passwordPool().completed;
    const hash = await hashPassword('correct horse battery', 6);
    expect(hash).toMatch(/^\$2b\$06\$/);
    // Checked by bcryptjs on this thread, independently of the pool.
    expect(bcrypt.compareSync('correct horse battery', hash)).toBe(true);
    expect(await verifyPassword('correct horse battery', hash)).toBe(true);
    expect(await verifyPassword('wrong horse battery', hash)).toBe(false);
    expect(passwordPool().completed - before).toBe(3);
  });

  it('keeps timers on this thread running while hashes are computed', async () => {
    // Four hashes at cost 12 take seconds of CPU; on the event loop (even through bcryptjs's
    // async API, which yields only every 100 ms) the loop would stall for that long.
    const delay = monitorEventLoopDelay({ resolution: 5 });
    delay.enable();
    let ticks = 0;
    const timer = setInterval(() => ticks++, 10);
    const started = performance.now();
    await Promise.all([1, 2, 3, 4].map((i) => hashPassword(`password number ${i}`, 12)));
    const elapsed = performance.now() - started;
    clearInterval(timer);
    delay.disable();
    console.log(
      `[password-hasher] 4 hashes at cost 12: ${elapsed.toFixed(0)} ms, ${ticks} timer ticks, event-loop delay max ${(delay.max / 1e6).toFixed(1)} ms`,
    );
    // Loose on purpose (a shared, loaded machine): the loop ran through most of the work.
    expect(ticks).toBeGreaterThan(elapsed / 10 / 4);
  });
});
