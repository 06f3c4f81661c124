// The catalogue at some size: a few thousand synthetic resonances, ANALYZEd, then
// - EXPLAIN of the page query of the usual searches: read off an index, no Seq Scan on
//   resonances, and no Sort where an index holds the order (keyset cursors included);
// - every sort walked by cursor forward and back gives exactly the rows of one ordered
//   query, with ties, +Infinity keys, arrays and microsecond timestamps in the data;
// - the kinds of totals (exact, cached with its age, estimated) and when each is given.
import { and, eq, sql } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { decodeCursor, encodeCursor, type CursorPosition } from '../../server/catalogue/catalogue-cursor.js';
import {
  catalogueQuerySchema,
  catalogueSorts,
  sortIndexName,
  toCataloguePageRequest,
  type CataloguePageRequest,
} from '../../server/catalogue/catalogue-query.js';
import { countResonances, estimateResonances, pageOfResonances, pageQuery } from '../../server/catalogue/catalogue-repository.js';
import { CatalogueService } from '../../server/catalogue/catalogue-service.js';
import { connectDb, type DbHandle } from '../../server/db/client.js';
import { resonances } from '../../server/db/schema/catalogue.js';
import { insertResonances, makeGroup } from '../../scripts/synthetic-catalogue.js';
import { testDatabaseUrl } from './test-app.js';

const MAIN_ROWS = 6000;
const SMALL_ROWS = 1200;

let handle: DbHandle;
let main: { groupId: string; userId: string };
let small: { groupId: string; userId: string };

function request(query: string): CataloguePageRequest {
  return toCataloguePageRequest(catalogueQuerySchema.parse(Object.fromEntries(new URLSearchParams(query))));
}

interface PlanNode {
  'Node Type': string;
  'Relation Name'?: string;
  'Index Name'?: string;
  'Index Cond'?: string;
  Plans?: PlanNode[];
}

function nodes(plan: PlanNode): PlanNode[] {
  return [plan, ...(plan.Plans ?? []).flatMap(nodes)];
}

async function planOf(q: { getSQL(): unknown }): Promise<PlanNode[]> {
  const result = await handle.db.execute(sql`explain (format json) ${q}`);
  const raw = (result.rows[0] as Record<string, unknown>)['QUERY PLAN'];
  const doc = (typeof raw === 'string' ? JSON.parse(raw) : raw) as { Plan: PlanNode }[];
  return nodes(doc[0]!.Plan);
}

function describePlan(plan: PlanNode[]): string {
  return plan
    .map((n) => `${n['Node Type']}${n['Index Name'] ? ` using ${n['Index Name']}` : ''}${n['Relation Name'] ? ` on ${n['Relation Name']}` : ''}`)
    .join(' → ');
}

/** A cursor position after (or before) the row at `offset` of the search, taken from the data. */
async function positionAt(req: CataloguePageRequest, offset: number, toward: CursorPosition['toward']): Promise<CursorPosition> {
  const [row] = await pageOfResonances(handle.db, main.groupId, req, { offset }, 1);
  return { toward, key: row!.key, page: 2 };
}

beforeAll(async () => {
  handle = connectDb(testDatabaseUrl(), 4);
  const db = handle.db;
  const tag = Math.random().toString(36).slice(2, 8);
  main = await makeGroup(db, `plans-main-${tag}`, `plans.main.${tag}@fixture.example`, 'not-a-real-hash');
  small = await makeGroup(db, `plans-small-${tag}`, `plans.small.${tag}@fixture.example`, 'not-a-real-hash');
  await insertResonances(db, main.groupId, main.userId, MAIN_ROWS, 'plans', 0x2545f491);
  await insertResonances(db, small.groupId, small.userId, SMALL_ROWS, 'walk', 0x1b873593);
  // Keys a cursor must carry exactly: equal timestamps (ties broken by energy, id) and
  // microseconds a JavaScript Date would lose; equal energies (ties broken by id).
  await db.execute(sql`update ${resonances} set created_at = timestamptz '2026-01-02 03:04:05.123456+00' where group_id = ${small.groupId} and idx % 7 = 0`);
  await db.execute(sql`update ${resonances} set created_at = created_at + interval '1 microsecond' where group_id = ${small.groupId} and idx % 7 = 1`);
  await db.execute(sql`update ${resonances} set energy = 3.25 where group_id = ${small.groupId} and idx % 11 = 0`);
  await db.execute(sql`analyze resonances`);
}, 240_000);

afterAll(async () => {
  await handle?.close();
});

describe('query plans on a catalogue of some size (EXPLAIN, after ANALYZE)', () => {
  // Every sort, both ways, first page and a keyset page deep in: the sort's own index, no Sort.
  const sortCases = catalogueSorts.flatMap((sort) => (['asc', 'desc'] as const).map((dir) => [sort, dir] as const));

  it.each(sortCases)('sort=%s&dir=%s reads its index in order, on the first page and beyond a cursor', async (sort, dir) => {
    const req = request(`sort=${sort}&dir=${dir}&pageSize=25`);
    const first = await planOf(pageQuery(handle.db, main.groupId, req, { offset: 0 }, 26));
    const index = sortIndexName(sort);
    expect(
      first.map((n) => n['Node Type']),
      describePlan(first),
    ).not.toContain('Sort');
    expect(
      first.some((n) => n['Node Type'] === 'Seq Scan' && n['Relation Name'] === 'resonances'),
      describePlan(first),
    ).toBe(false);
    expect(
      first.some((n) => n['Index Name'] === index),
      describePlan(first),
    ).toBe(true);

    for (const toward of ['after', 'before'] as const) {
      const position = await positionAt(req, 3000, toward);
      const deep = await planOf(pageQuery(handle.db, main.groupId, req, { cursor: position }, 26));
      const scan = deep.find((n) => n['Index Name'] === index);
      expect(scan, describePlan(deep)).toBeDefined();
      // The cursor bounds the scan (an index condition), it does not filter rows read from the start.
      expect(scan!['Index Cond'] ?? '').toMatch(/ROW\(/);
      expect(
        deep.map((n) => n['Node Type']),
        describePlan(deep),
      ).not.toContain('Sort');
    }
  });

  it.each([
    // Filters whose order an index holds: no Sort, index scan.
    ['emin=5&emax=6&sort=energy', true],
    ['family=disk&gmin=0.001&gmax=0.01&sort=energy', true],
    ['family=disk&sort=energy&dir=desc', true],
    ['qmin=10000&bound=false&sort=quality&dir=desc', true],
    ['taumin=100&sort=lifetime&dir=desc', true],
    ['emin=5&emax=6&sort=quality&dir=desc', false],
    ['tag=candidate&sort=width', false],
    ['q=whisper%20gall&sort=date&dir=desc', false],
    ['material=GaAs&bmin=0.5&sort=date&dir=desc', false],
  ])('?%s: no Seq Scan on resonances (and no Sort: %s)', async (query, sortFree) => {
    const plan = await planOf(pageQuery(handle.db, main.groupId, request(`${query}&pageSize=25`), { offset: 0 }, 26));
    expect(
      plan.some((n) => n['Node Type'] === 'Seq Scan' && n['Relation Name'] === 'resonances'),
      describePlan(plan),
    ).toBe(false);
    expect(
      plan.some((n) => n['Relation Name'] === 'resonances'),
      describePlan(plan),
    ).toBe(true);
    if (sortFree)
      expect(
        plan.map((n) => n['Node Type']),
        describePlan(plan),
      ).not.toContain('Sort');
  });

  it('bound=false is checked in the Q index, not by fetching the bound rows that lead a descending Q order', async () => {
    const plan = await planOf(pageQuery(handle.db, main.groupId, request('qmin=100&bound=false&sort=quality&dir=desc&pageSize=25'), { offset: 0 }, 26));
    const scan = plan.find((n) => n['Index Name'] === 'resonances_group_quality_key');
    expect(scan?.['Index Cond'] ?? '', describePlan(plan)).toMatch(/bound = false/);
  });

  it('the planner estimate of a group is close to its count once ANALYZEd', async () => {
    const estimate = await estimateResonances(handle.db, main.groupId, request(''));
    expect(Math.abs(estimate - MAIN_ROWS)).toBeLessThan(0.1 * MAIN_ROWS);
  });
});

describe('keyset paging walks', () => {
  it.each(catalogueSorts.flatMap((sort) => (['asc', 'desc'] as const).map((dir) => [sort, dir] as const)))(
    'sort=%s&dir=%s: next, next… then prev, prev… give exactly the ordered rows, with page numbers',
    async (sort, dir) => {
      const service = new CatalogueService(handle.db);
      const base = `sort=${sort}&dir=${dir}&pageSize=97`;
      const all = await pageOfResonances(handle.db, small.groupId, request(base), { offset: 0 }, SMALL_ROWS + 10);
      expect(all).toHaveLength(SMALL_ROWS);
      const expected = all.map((r) => r.record.id);

      const forward: string[][] = [];
      let answer = await service.search(small.groupId, request(base));
      expect(answer.prevCursor).toBeNull();
      for (;;) {
        expect(answer.page).toBe(forward.length + 1);
        forward.push(answer.items.map((r) => r.id));
        if (!answer.nextCursor) break;
        answer = await service.search(small.groupId, request(`${base}&cursor=${answer.nextCursor}`));
      }
      expect(forward.flat()).toEqual(expected);
      expect(forward).toHaveLength(Math.ceil(SMALL_ROWS / 97));

      const backward: string[][] = [forward.at(-1)!];
      while (answer.prevCursor) {
        answer = await service.search(small.groupId, request(`${base}&cursor=${answer.prevCursor}`));
        backward.unshift(answer.items.map((r) => r.id));
        expect(answer.page).toBe(forward.length - backward.length + 1);
      }
      // Back at the start, the first page is whole, whatever the size of the last page.
      expect(backward).toEqual(forward);
    },
    60_000,
  );

  it('a numbered page hands out cursors that continue from it', async () => {
    const service = new CatalogueService(handle.db);
    const third = await service.search(main.groupId, request('sort=width&pageSize=50&page=3'));
    const fourth = await service.search(main.groupId, request(`sort=width&pageSize=50&cursor=${third.nextCursor}`));
    const second = await service.search(main.groupId, request(`sort=width&pageSize=50&cursor=${third.prevCursor}`));
    const byOffset = await pageOfResonances(handle.db, main.groupId, request('sort=width'), { offset: 50 }, 150);
    expect([...second.items, ...third.items, ...fourth.items].map((r) => r.id)).toEqual(byOffset.map((r) => r.record.id));
    expect([second.page, third.page, fourth.page]).toEqual([2, 3, 4]);
  });

  it('refuses a cursor of another search, and one that is not a cursor, naming query.cursor', async () => {
    const service = new CatalogueService(handle.db);
    const { nextCursor } = await service.search(main.groupId, request('family=disk&sort=energy'));
    for (const query of [
      `family=stadium&sort=energy&cursor=${nextCursor}`,
      `family=disk&sort=width&cursor=${nextCursor}`,
      `family=disk&sort=energy&dir=desc&cursor=${nextCursor}`,
    ]) {
      await expect(service.search(main.groupId, request(query))).rejects.toMatchObject({ status: 400, issues: [{ path: 'query.cursor' }] });
    }
    // A well-formed cursor whose key has the wrong type for the sort.
    const req = request('sort=date');
    const forged = encodeCursor(req, { toward: 'after', key: ['yesterday', '1.5', '8d4f0b8e-0000-4000-8000-000000000000'], page: 2 });
    expect(() => decodeCursor(forged, req)).toThrow(/cursor/);
    await expect(service.search(main.groupId, request('sort=date&cursor=bm90LWpzb24'))).rejects.toMatchObject({ status: 400 });
  });
});

describe('totals: exact, cached with its age, or estimated', () => {
  const policy = { countBelow: 2000, countCap: 10_000, freshMs: 30_000, staleMs: 600_000, maxEntries: 100, maxQueued: 4 };

  /** A change of one of the group's rows, as any process might make it: the trigger raises the generation. */
  async function retagOne(groupId: string, tag: string): Promise<void> {
    await handle.db.execute(
      sql`update ${resonances} set tags = array_append(tags, ${tag}) where id = (select id from ${resonances} where group_id = ${groupId} and not (${tag} = any(tags)) limit 1)`,
    );
  }

  it('counts a small set on the spot, then answers that count as exact while the generation holds', async () => {
    const service = new CatalogueService(handle.db, policy);
    const req = request('family=disk&emin=5&emax=6');
    const answer = await service.search(main.groupId, req);
    expect(answer.totalKind).toBe('exact');
    expect(answer.total).toBe(await countResonances(handle.db, main.groupId, req));
    expect(answer.countAgeSeconds).toBe(0);
    expect(await service.search(main.groupId, req)).toMatchObject({ totalKind: 'exact', total: answer.total, countedAt: answer.countedAt });
    // A change in the group: the small set is counted again on the spot, never answered from before.
    await retagOne(main.groupId, 'small-set-change');
    const after = await service.search(main.groupId, req);
    expect(after.totalKind).toBe('exact');
    expect(after.total).toBe(await countResonances(handle.db, main.groupId, req));
  });

  it('stops counting at the cap when the set is larger than the planner thought, and estimates instead', async () => {
    const service = new CatalogueService(handle.db, { ...policy, countBelow: 1_000_000, countCap: 10 });
    const req = request('family=disk');
    const answer = await service.search(main.groupId, req);
    expect(answer.totalKind).toBe('estimated');
    expect(answer.total).toBeGreaterThan(10);
    // Asked again: now it is counted in the background.
    expect((await service.search(main.groupId, req)).totalKind).toBe('estimated');
    await service.settled();
    expect(await service.search(main.groupId, req)).toMatchObject({ totalKind: 'exact', total: await countResonances(handle.db, main.groupId, req) });
  });

  it('estimates a large set, counts it in the background once asked again, then: exact while nothing changes, its age after a change until recounted, too old an estimate', async () => {
    let clock = Date.UTC(2026, 0, 1);
    const service = new CatalogueService(handle.db, { ...policy, countBelow: 100 }, () => clock);
    const req = request('sort=date&dir=desc');
    const exact = (await countResonances(handle.db, main.groupId, req))!;

    const first = await service.search(main.groupId, req);
    expect(first.totalKind).toBe('estimated');
    expect(first.countedAt).toBeNull();
    expect(first.countAgeSeconds).toBeNull();
    expect(Math.abs(first.total - exact)).toBeLessThan(0.1 * exact);
    // Asked once, it is not counted (a search made once is not worth a full count)…
    await service.settled();
    expect((await service.search(main.groupId, req)).totalKind).toBe('estimated');
    // …asked a second time, it is counted in the background.
    await service.settled();
    clock += 20_000;
    // Nothing changed in the group since the count: it is the number of matches now, with when it was taken.
    const second = await service.search(main.groupId, req);
    expect(second).toMatchObject({ totalKind: 'exact', total: exact, countAgeSeconds: 20, countedAt: new Date(clock - 20_000).toISOString() });

    // A change (here a retag, which does not change this total): the count predates it, so it is
    // answered as cached with its age; not recounted while younger than freshMs (30 s)…
    await retagOne(main.groupId, 'large-set-change');
    clock += 5_000;
    expect(await service.search(main.groupId, req)).toMatchObject({ totalKind: 'cached', total: exact, countAgeSeconds: 25 });
    await service.settled();
    clock += 1_000;
    expect(await service.search(main.groupId, req)).toMatchObject({ totalKind: 'cached', countAgeSeconds: 26 });
    // …then recounted in the background while still answered with its age.
    clock += 54_000;
    const third = await service.search(main.groupId, req);
    expect(third).toMatchObject({ totalKind: 'cached', total: exact, countAgeSeconds: 80 });
    await service.settled();
    expect(await service.search(main.groupId, req)).toMatchObject({ totalKind: 'exact', total: exact, countAgeSeconds: 0 });

    // …and beyond staleMs after a change, an estimate again.
    await retagOne(main.groupId, 'large-set-change-2');
    clock += 700_000;
    expect((await service.search(main.groupId, req)).totalKind).toBe('estimated');
    await service.settled();
  });

  it('count=exact counts now; after a label change the new total shows once recounted, the old one only as cached', async () => {
    const service = new CatalogueService(handle.db, { ...policy, countBelow: 100 });
    const req = request('tag=candidate&count=exact');
    const exact = await service.search(main.groupId, req);
    expect(exact).toMatchObject({ totalKind: 'exact', total: await countResonances(handle.db, main.groupId, req) });
    expect(await service.search(main.groupId, request('tag=candidate'))).toMatchObject({ totalKind: 'exact', total: exact.total });

    const [untagged] = await handle.db
      .select({ id: resonances.id })
      .from(resonances)
      .where(and(eq(resonances.groupId, main.groupId), sql`cardinality(${resonances.tags}) = 0`))
      .limit(1);
    await service.label(main.groupId, main.userId, untagged!.id, { tags: ['candidate'] });
    const after = await service.search(main.groupId, request('tag=candidate'));
    expect(after).toMatchObject({ totalKind: 'cached', total: exact.total });
    // The page itself is read afresh: the newly tagged row is among the matches at once.
    expect((await service.search(main.groupId, request('tag=candidate&sort=energy&pageSize=200&count=exact'))).total).toBe(exact.total + 1);
    await service.settled();
    expect(await service.search(main.groupId, request('tag=candidate'))).toMatchObject({ totalKind: 'exact', total: exact.total + 1 });
  });
});
