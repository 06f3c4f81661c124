// The body of the password-hashing threads (server/auth/password-hasher.ts). Plain
// JavaScript so the thread starts without a TypeScript loader.
import bcrypt from 'bcryptjs';

/** @param {{ op: 'hash', password: string, cost: number } | { op: 'verify', password: string, hash: string }} task */
export default function run(task) {
  return task.op === 'hash' ? bcrypt.hashSync(task.password, task.cost) : bcrypt.compareSync(task.password, task.hash);
}
