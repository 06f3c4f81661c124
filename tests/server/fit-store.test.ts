// Peak fits follow the run store's rules (fit-store.ts): the transition table refuses
// what it does not list, writing nothing, and a worker whose attempt no longer owns the
// fit (the supervisor handed it on) cannot fail or complete it late.
import { eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { connectDb, type DbHandle } from '../../server/db/client.js';
import { measuredTraces, peakFits, type FitStatus } from '../../server/db/schema/fits.js';
import { failFit } from '../../server/fits/fit-service.js';
import { FIT_TRANSITIONS, fitStore } from '../../server/fits/fit-store.js';
import { IllegalTransition } from '../../server/jobs/job-lifecycle.js';
import { createLab, type Lab } from './lab-fixture.js';
import { testDatabaseUrl } from './test-app.js';

let handle: DbHandle;
let lab: Lab;
let traceId: string;

beforeAll(async () => {
  handle = connectDb(testDatabaseUrl(), 2);
  lab = await createLab(handle.db, ['designer']);
  const [trace] = await handle.db
    .insert(measuredTraces)
    .values({
      groupId: lab.groupId,
      deviceName: 'D1',
      fileName: 't.csv',
      temperatureMK: 20,
      content: '',
      columns: ['E', 'T'],
      selection: {},
      energies: [1, 2, 3],
      transmission: [0.1, 0.5, 0.1],
    })
    .returning({ id: measuredTraces.id });
  traceId = trace!.id;
});
afterAll(async () => handle?.close());

/** A fit put straight into `status` (the test writes the row itself to reach every state). */
async function fitIn(status: FitStatus) {
  const id = await fitStore.create(handle.db, { groupId: lab.groupId, traceId, request: {}, createdBy: lab.as('designer').id }, false);
  await handle.db
    .update(peakFits)
    .set({ status, attempt: status === 'queued' ? 0 : 1 })
    .where(eq(peakFits.id, id));
  return rowOf(id);
}

async function rowOf(id: string) {
  const [row] = await handle.db.select().from(peakFits).where(eq(peakFits.id, id));
  return row!;
}

const statuses = Object.keys(FIT_TRANSITIONS) as FitStatus[];
const illegal = statuses.flatMap((from) => statuses.filter((to) => !FIT_TRANSITIONS[from].includes(to)).map((to) => [from, to] as const));

describe('the fit transition table', () => {
  it.each(illegal)('refuses %s → %s and changes nothing', async (from, to) => {
    const before = await fitIn(from);
    await expect(fitStore.transition(handle.db, before.id, to)).rejects.toBeInstanceOf(IllegalTransition);
    expect(await rowOf(before.id)).toEqual(before);
  });

  it('a late failure of a superseded attempt leaves the fit to the live attempt', async () => {
    const before = await fitIn('running');
    // The supervisor handed attempt 1 on and attempt 2 claimed the fit.
    await handle.db.update(peakFits).set({ attempt: 2 }).where(eq(peakFits.id, before.id));
    const live = await rowOf(before.id);
    expect(await failFit(handle.db, before.id, 1, 'the old thread crashed')).toBe(false);
    expect(await rowOf(before.id)).toEqual(live);
    expect(await fitStore.complete(handle.db, before.id, 1, { result: {} as never })).toBe(false);
    expect(await rowOf(before.id)).toEqual(live);
    // The live attempt's end is written.
    expect(await failFit(handle.db, before.id, 2, 'bad input')).toBe(true);
    expect(await rowOf(before.id)).toMatchObject({ status: 'failed', error: 'bad input' });
  });
});
