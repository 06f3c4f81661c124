// Applies the drizzle-kit migrations in migrations/ (generated, never hand-edited).
//   tsx scripts/migrate.ts   (uses DATABASE_URL or the default poleward database)
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { drizzle } from 'drizzle-orm/node-postgres';
import { migrate as runMigrations } from 'drizzle-orm/node-postgres/migrator';
import pg from 'pg';
import { backfillDerivedFigures, backfillOutlines } from '../server/models/model-backfill.js';
import { backfillDerivedColumns } from '../server/catalogue/derived-columns-backfill.js';
import * as schema from '../server/db/schema/index.js';

const migrationsFolder = join(dirname(fileURLToPath(import.meta.url)), '..', 'migrations');

export async function migrate(databaseUrl: string): Promise<void> {
  const pool = new pg.Pool({ connectionString: databaseUrl, max: 1 });
  try {
    const db = drizzle(pool);
    await runMigrations(db, { migrationsFolder });
    // Data the migrations cannot compute in SQL: derived figures of older model versions,
    // their cavity outlines (traced from the rasterised mask), then the columns only code can
    // compute (dimensions, validity figures).
    await backfillDerivedFigures(db);
    await backfillOutlines(db);
    await backfillDerivedColumns(drizzle(pool, { schema }), (line) => console.log(line));
  } finally {
    await pool.end();
  }
}

if (process.argv[1] && fileURLToPath(import.meta.url) === process.argv[1]) {
  const { loadConfig } = await import('../server/config.js');
  const url = loadConfig().databaseUrl;
  await migrate(url);
  console.log(`[migrate] up to date: ${url}`);
}
