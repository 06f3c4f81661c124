/**
 * Whether an error means the database cannot be reached right now (as opposed to a bad
 * query): refused or dropped connections, pool timeouts, a server shutting down or
 * starting, too many connections. Drizzle wraps the driver's error in `cause`.
 */
const outageCodes = new Set(['ECONNREFUSED', 'ECONNRESET', 'ETIMEDOUT', 'EPIPE', 'EHOSTUNREACH', 'ENOTFOUND', '57P01', '57P02', '57P03', '53300']);
const outageMessages = [
  /Connection terminated/i,
  /timeout exceeded when trying to connect/i,
  /Client has encountered a connection error/i,
  /the database system is (starting up|shutting down)/i,
];

export function isDatabaseOutage(err: unknown): boolean {
  for (let e = err, depth = 0; e && depth < 6; e = (e as { cause?: unknown }).cause, depth++) {
    const code = (e as { code?: unknown }).code;
    if (typeof code === 'string' && (outageCodes.has(code) || code.startsWith('08'))) return true;
    const message = (e as { message?: unknown }).message;
    if (typeof message === 'string' && outageMessages.some((p) => p.test(message))) return true;
    if (e instanceof AggregateError && e.errors.some((x) => isDatabaseOutage(x))) return true;
  }
  return false;
}

/** Seconds a client should wait before trying again after a 503 for a database outage. */
export const outageRetrySeconds = 5;
