/** Polls `probe` every 100 ms until it answers something truthy, or fails naming what it waited for. */
export async function waitFor<T>(what: string, probe: () => Promise<T | null | undefined | false>, seconds: number): Promise<T> {
  const until = Date.now() + seconds * 1000;
  for (;;) {
    const v = await probe();
    if (v) return v;
    if (Date.now() > until) throw new Error(`timed out after ${seconds} s waiting for ${what}`);
    await new Promise((r) => setTimeout(r, 100));
  }
}
