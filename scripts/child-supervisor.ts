/**
 * Keeps a set of child processes running: one that dies is started again after a
 * back-off (1 s, 2 s, 4 s … up to 30 s; back to 1 s once it has run 60 s), while
 * the others keep serving. Every exit and restart is logged with the process's
 * name, its exit code or signal, and when it comes back. `stop()` ends them all
 * (SIGTERM, then SIGKILL after a grace period) and restarts nothing more.
 */
import { spawn, type ChildProcess, type SpawnOptions } from 'node:child_process';

export interface ChildSpec {
  name: string;
  command: string;
  args: string[];
}

export interface BackOff {
  firstSeconds: number;
  maxSeconds: number;
  /** A child that ran this long before dying counts as healthy: its back-off starts again. */
  stableSeconds: number;
}

export const DEFAULT_BACK_OFF: BackOff = { firstSeconds: 1, maxSeconds: 30, stableSeconds: 60 };

/** The wait before restart number `failures` (1, 2, …) in a row: first·2^(failures−1), capped. */
export function restartDelaySeconds(failures: number, b: BackOff = DEFAULT_BACK_OFF): number {
  return Math.min(b.maxSeconds, b.firstSeconds * 2 ** Math.max(0, failures - 1));
}

interface Slot {
  spec: ChildSpec;
  child: ChildProcess | null;
  startedAt: number;
  failures: number;
  restarts: number;
  timer: NodeJS.Timeout | null;
}

export interface ChildSupervisor {
  /** The live process of each child by name (null while it waits to restart). */
  pid(name: string): number | undefined;
  restarts(name: string): number;
  stop(graceMs?: number): Promise<void>;
}

export function superviseChildren(
  specs: ChildSpec[],
  opts: { spawnOptions?: SpawnOptions; backOff?: BackOff; log?: (line: string) => void } = {},
): ChildSupervisor {
  const backOff = opts.backOff ?? DEFAULT_BACK_OFF;
  const log = opts.log ?? ((line) => console.error(`[poleward] ${line}`));
  let stopping = false;
  const slots = specs.map<Slot>((spec) => ({ spec, child: null, startedAt: 0, failures: 0, restarts: 0, timer: null }));

  const launch = (slot: Slot) => {
    slot.timer = null;
    if (stopping) return;
    const child = spawn(slot.spec.command, slot.spec.args, { stdio: 'inherit', ...opts.spawnOptions });
    slot.child = child;
    slot.startedAt = Date.now();
    child.on('error', (err) => log(`${slot.spec.name} could not start: ${err.message}`));
    child.on('exit', (code, signal) => {
      slot.child = null;
      if (stopping) return;
      const ranSeconds = (Date.now() - slot.startedAt) / 1000;
      slot.failures = ranSeconds >= backOff.stableSeconds ? 1 : slot.failures + 1;
      const delay = restartDelaySeconds(slot.failures, backOff);
      slot.restarts++;
      log(
        `${slot.spec.name} (pid ${child.pid}) stopped (${signal ? `signal ${signal}` : `exit code ${code}`}) after ${ranSeconds.toFixed(1)} s; ` +
          `restarting in ${delay} s (restart ${slot.restarts}); the other processes keep serving`,
      );
      slot.timer = setTimeout(() => launch(slot), delay * 1000);
    });
  };
  for (const slot of slots) launch(slot);

  return {
    pid: (name) => slots.find((s) => s.spec.name === name)?.child?.pid,
    restarts: (name) => slots.find((s) => s.spec.name === name)?.restarts ?? 0,
    async stop(graceMs = 1500) {
      if (stopping) return;
      stopping = true;
      const alive = slots.filter((s) => s.child && s.child.exitCode === null && s.child.signalCode === null);
      for (const s of slots) if (s.timer) clearTimeout(s.timer);
      const exits = alive.map((s) => new Promise((r) => s.child!.once('exit', r)));
      for (const s of alive) s.child!.kill('SIGTERM');
      const all = Promise.all(exits);
      const timedOut = await Promise.race([all.then(() => false), new Promise<boolean>((r) => setTimeout(() => r(true), graceMs))]);
      if (timedOut) {
        for (const s of alive) if (s.child && s.child.exitCode === null) s.child.kill('SIGKILL');
        await all;
      }
    },
  };
}
