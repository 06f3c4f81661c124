/**
 * Whether an error means the database cannot be reached right now (server down,
 * restarting, or refusing connections), rather than a bug: the API answers 503
 * with a retry hint for these, and 500 for the rest. Drizzle wraps driver errors,
 * so the whole `cause` chain is looked at.
 */
const OUTAGE_CODES = new Set([
  'ECONNREFUSED',
  'ECONNRESET',
  'ETIMEDOUT',
  'EPIPE',
  '57P01', // admin_shutdown
  '57P02', // crash_shutdown
  '57P03', // cannot_connect_now (starting up)
  '08000', // connection_exception
  '08001',
  '08003',
  '08004',
  '08006',
]);
const OUTAGE_MESSAGES = /Connection terminated|connection timeout|timeout exceeded when trying to connect|the database system is (starting up|shutting down)/i;

/** Seconds a client should wait before trying again during an outage. */
export const OUTAGE_RETRY_SECONDS = 5;

export function isDatabaseOutage(err: unknown): boolean {
  for (let e = err, depth = 0; e && depth < 5; e = (e as { cause?: unknown }).cause, depth++) {
    const code = (e as { code?: unknown }).code;
    if (typeof code === 'string' && OUTAGE_CODES.has(code)) return true;
    if (e instanceof Error && OUTAGE_MESSAGES.test(e.message)) return true;
  }
  return false;
}
