// The whole-database backup the README describes, with PostgreSQL's own tools: a
// custom-format pg_dump of the test database restored by pg_restore into a fresh
// database on the same server, where the rows are found again.
import { inlineCompute } from '../../server/compute/compute-pool.js';
import { execFileSync } from 'node:child_process';
import { mkdtempSync, rmSync, statSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { count, eq } from 'drizzle-orm';
import { afterAll, describe, expect, it } from 'vitest';
import { connectDb } from '../../server/db/client.js';
import { cavityModels, modelVersions } from '../../server/db/schema/models.js';
import { researchGroups } from '../../server/db/schema/groups.js';
import { startBoss } from '../../server/jobs/boss.js';
import { ModelService } from '../../server/models/model-service.js';
import { createLab } from './lab-fixture.js';
import { testDatabaseUrl } from './test-app.js';
import { smallRectangle } from './fixtures/small-cavity.js';

const bin = '/usr/lib/postgresql/15/bin';
const source = new URL(testDatabaseUrl());
const restoredName = `${source.pathname.slice(1)}_restored`;
const conn = ['-h', source.hostname, '-p', source.port || '5432', '-U', source.username || 'postgres'];
const dir = mkdtempSync(join(tmpdir(), 'poleward-dump-'));

afterAll(() => {
  execFileSync(join(bin, 'dropdb'), [...conn, '--if-exists', restoredName]);
  rmSync(dir, { recursive: true, force: true });
});

describe('whole-database backup with pg_dump and pg_restore', () => {
  it('a dump restored into a fresh database holds the same rows', async () => {
    const handle = connectDb(testDatabaseUrl(), 2);
    const lab = await createLab(handle.db, ['designer']);
    const model = await new ModelService(handle.db, inlineCompute).create(lab.groupId, lab.as('designer').id, smallRectangle('Dumped dot'));
    const [groups] = await handle.db.select({ n: count() }).from(researchGroups);
    await handle.close();
    // A job waiting in the queue, in a queue of its own so no worker of another test takes it.
    const boss = await startBoss({ databaseUrl: testDatabaseUrl() });
    await boss.createQueue('dump-check');
    const jobId = await boss.send('dump-check', { note: 'waiting' });
    await boss.stop({ graceful: false, wait: true });

    const file = join(dir, 'poleward.dump');
    // The README's commands, with the test database in place of poleward.
    execFileSync(join(bin, 'pg_dump'), [...conn, '--format=custom', '--file', file, source.pathname.slice(1)]);
    expect(statSync(file).size).toBeGreaterThan(1000);
    execFileSync(join(bin, 'dropdb'), [...conn, '--if-exists', restoredName]);
    execFileSync(join(bin, 'createdb'), [...conn, restoredName]);
    execFileSync(join(bin, 'pg_restore'), [...conn, '--dbname', restoredName, '--no-owner', '--exit-on-error', file]);

    const restoredUrl = new URL(testDatabaseUrl());
    restoredUrl.pathname = `/${restoredName}`;
    const restored = connectDb(restoredUrl.toString(), 2);
    try {
      const [row] = await restored.db.select().from(cavityModels).where(eq(cavityModels.id, model.id));
      expect(row?.name).toBe('Dumped dot');
      expect(row?.groupId).toBe(lab.groupId);
      const [versions] = await restored.db.select({ n: count() }).from(modelVersions).where(eq(modelVersions.modelId, model.id));
      expect(versions!.n).toBe(1);
      const [restoredGroups] = await restored.db.select({ n: count() }).from(researchGroups);
      expect(restoredGroups!.n).toBe(groups!.n);
      // The queue's own tables come along too: a job waiting in pg-boss is not lost.
      const jobs = await restored.pool.query(`select state, data from pgboss.job where id = $1`, [jobId]);
      expect(jobs.rows).toEqual([{ state: 'created', data: { note: 'waiting' } }]);
    } finally {
      await restored.close();
    }
  });
});
