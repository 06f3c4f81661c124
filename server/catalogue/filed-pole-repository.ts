/**
 * Writes one computed pole that no run produced (a study step kept as a model version)
 * into the catalogue: its row, its mode vector and its two mode images, in the caller's
 * transaction. The row has no run (run_id and idx null); its provenance is in details.
 */
import { createHash } from 'node:crypto';
import type { Queryable } from '../db/client.js';
import { modeImages, resonanceModes, resonances } from '../db/schema/catalogue.js';

type FiledPoleRow = Omit<typeof resonances.$inferInsert, 'id' | 'runId' | 'fitId' | 'idx' | 'source'>;

export async function insertFiledPole(q: Queryable, row: FiledPoleRow, mode: Float64Array, images: { size: 'thumb' | 'full'; png: Uint8Array }[]): Promise<string> {
  const [inserted] = await q
    .insert(resonances)
    .values({ ...row, runId: null, fitId: null, idx: null, source: 'computed' })
    .returning({ id: resonances.id });
  await q.insert(resonanceModes).values({ resonanceId: inserted.id, sites: mode.length / 2, vector: Buffer.from(mode.buffer, mode.byteOffset, mode.byteLength) });
  for (const { size, png } of images) {
    const bytes = Buffer.from(png.buffer, png.byteOffset, png.byteLength);
    await q.insert(modeImages).values({
      resonanceId: inserted.id,
      size,
      width: bytes.readUInt32BE(16),
      height: bytes.readUInt32BE(20),
      etag: `"${createHash('sha256').update(bytes).digest('hex').slice(0, 32)}"`,
      png: bytes,
    });
  }
  return inserted.id;
}
