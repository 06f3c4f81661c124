import { defineConfig } from 'drizzle-kit';

// drizzle-kit follows the barrel's re-exports; migrations are generated, never hand-edited.
export default defineConfig({
  dialect: 'postgresql',
  schema: './server/db/schema/index.ts',
  out: './migrations',
  dbCredentials: { url: process.env.DATABASE_URL ?? 'postgres://postgres@127.0.0.1:54329/poleward' },
});
