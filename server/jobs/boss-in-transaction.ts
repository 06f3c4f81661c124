import { sql, type SQL } from 'drizzle-orm';
import type PgBoss from 'pg-boss';
import type { Queryable } from '../db/client.js';

/**
 * pg-boss's connection seam (`{ db }` on send, complete, fail, getJobById) over a
 * drizzle transaction, so a run row and its queue job change in one commit: the
 * attempt that writes the run's end is the only one that can end its job.
 * pg-boss's `$n` placeholders become drizzle params (`sql.param`, so an array of
 * ids stays one parameter).
 */
export function bossDb(q: Queryable): PgBoss.Db {
  return {
    async executeSql(text: string, values: unknown[] = []) {
      const parts = text.split(/\$(\d+)/);
      const chunks: SQL[] = [];
      for (let k = 0; k < parts.length; k++) {
        chunks.push(k % 2 === 0 ? sql.raw(parts[k]!) : sql`${sql.param(values[Number(parts[k]) - 1])}`);
      }
      const r = await q.execute(sql.join(chunks));
      return { rows: r.rows as unknown[] as Record<string, unknown>[] };
    },
  };
}

/** Jobs a pg-boss complete/fail/cancel changed (its typings say void; version 10 answers `{ affected }`). */
export function jobsAffected(answer: unknown): number {
  return (answer as { affected?: number } | undefined)?.affected ?? 0;
}
