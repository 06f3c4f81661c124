/**
 * Elapsed time and time left of a running run. The time left comes from the launch
 * estimate at first and from the progress so far once there is enough of it
 * (elapsed · (1 − f) / f), blended linearly over the first 30 % so it does not jump.
 */
export function progressTimes(
  startedAt: string | null,
  nowMs: number,
  fraction: number,
  expectedSeconds: number | null | undefined,
): { elapsed: number; remaining: number | null } | null {
  if (!startedAt) return null;
  const elapsed = Math.max(0, (nowMs - Date.parse(startedAt)) / 1000);
  const f = Math.min(1, Math.max(0, fraction));
  const fromEstimate = expectedSeconds != null && expectedSeconds > 0 ? Math.max(0, expectedSeconds - elapsed) : null;
  const fromProgress = f >= 0.02 && elapsed > 0 ? (elapsed * (1 - f)) / f : null;
  if (fromProgress === null) return { elapsed, remaining: fromEstimate };
  if (fromEstimate === null) return { elapsed, remaining: fromProgress };
  const w = Math.min(1, f / 0.3);
  return { elapsed, remaining: w * fromProgress + (1 - w) * fromEstimate };
}

/** "45 s", "3 min 05 s", "1 h 02 min". */
export function durationText(seconds: number): string {
  const s = Math.round(seconds);
  if (s < 60) return `${s} s`;
  if (s < 3600) return `${Math.floor(s / 60)} min ${String(s % 60).padStart(2, '0')} s`;
  return `${Math.floor(s / 3600)} h ${String(Math.floor((s % 3600) / 60)).padStart(2, '0')} min`;
}
