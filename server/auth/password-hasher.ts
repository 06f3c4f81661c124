import { Piscina } from 'piscina';

/** Hashes and checks passwords; the services take one so tests can count the work. */
export interface PasswordHasher {
  hash(password: string, cost: number): Promise<string>;
  verify(password: string, hash: string): Promise<boolean>;
}

/**
 * bcrypt runs in worker threads, never on the API's event loop. bcryptjs's own async
 * API is not enough: it yields only every 100 ms (its MAX_EXECUTION_TIME), so each
 * hash at cost 10 (about 200 ms here) holds the loop in 100 ms slices, and a few
 * anonymous requests at once would push health checks past their 100 ms budget.
 * Two threads at most (the machine has 2 cores); idle threads end after 30 s.
 */
let pool: Piscina | undefined;

export function passwordPool(): Piscina {
  pool ??= new Piscina({
    filename: new URL('./password-thread.mjs', import.meta.url).href,
    minThreads: 0,
    maxThreads: 2,
    idleTimeout: 30_000,
  });
  return pool;
}

export const threadPasswordHasher: PasswordHasher = {
  hash: (password, cost) => passwordPool().run({ op: 'hash', password, cost }) as Promise<string>,
  verify: (password, hash) => passwordPool().run({ op: 'verify', password, hash }) as Promise<boolean>,
};

/** Ends the threads (scripts that exit by themselves call it; the API keeps them). */
export async function closePasswordPool(): Promise<void> {
  const p = pool;
  pool = undefined;
  await p?.destroy();
}
