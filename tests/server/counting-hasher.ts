// A password hasher that counts its calls, so tests can see whether a request made the
// server do bcrypt work at all. It hashes for real (in the worker threads).
import { threadPasswordHasher, type PasswordHasher } from '../../server/auth/password-hasher.js';

interface CountingHasher extends PasswordHasher {
  calls: { hash: number; verify: number };
}

export function countingHasher(): CountingHasher {
  const calls = { hash: 0, verify: 0 };
  return {
    calls,
    hash(password, cost) {
      calls.hash++;
      return threadPasswordHasher.hash(password, cost);
    },
    verify(password, hash) {
      calls.verify++;
      return threadPasswordHasher.verify(password, hash);
    },
  };
}
