// Queues the demo catalogue: every reference device in catalogue/*.json becomes a
// model of the demo lab (once), with one pole-search run, computed by the workers
// in the background. Idempotent: a device already there is left alone.
import { readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { and, eq } from 'drizzle-orm';
import { z } from 'zod';
import type { Db } from '../server/db/client.js';
import { cavityModels } from '../server/db/schema/models.js';
import type { RunQueue } from '../server/jobs/boss.js';
import { inlineCompute } from '../server/compute/compute-pool.js';
import { ModelService } from '../server/models/model-service.js';
import { RunService } from '../server/runs/run-service.js';
import { projectRoot } from '../server/config.js';

const referenceSchema = z.object({
  key: z.string().regex(/^[a-z0-9-]+$/),
  /** The demo group the device belongs to (slug); the designer's lab when absent. */
  group: z
    .string()
    .regex(/^[a-z0-9-]+$/)
    .optional(),
  description: z.string(),
  model: z.unknown(),
  poleSearch: z.object({ emin: z.number(), emax: z.number(), gammaMax: z.number() }),
});
export type ReferenceDevice = z.infer<typeof referenceSchema>;

export function readReferenceDevices(folder = join(projectRoot, 'catalogue')): ReferenceDevice[] {
  return readdirSync(folder)
    .filter((f) => f.endsWith('.json'))
    .sort()
    .map((f) => {
      const parsed = referenceSchema.safeParse(JSON.parse(readFileSync(join(folder, f), 'utf8')));
      if (!parsed.success) throw new Error(`catalogue/${f}: ${parsed.error.issues.map((i) => `${i.path.join('.')}: ${i.message}`).join('; ')}`);
      return parsed.data;
    });
}

/**
 * `groupId`/`userId` take the devices without a `group`; `others` maps a group slug to the
 * group and the member who files its devices (e.g. the microwave group's own devices).
 */
export async function seedCatalogue(
  db: Db,
  queue: RunQueue,
  groupId: string,
  userId: string,
  log = console.log,
  others: Record<string, { groupId: string; userId: string }> = {},
): Promise<number> {
  // The seed is a command-line script: its geometry runs inline, and the demo runs are not limited.
  const models = new ModelService(db, inlineCompute);
  const runsService = new RunService(db, queue, inlineCompute);
  let queued = 0;
  for (const device of readReferenceDevices()) {
    const owner = device.group === undefined ? { groupId, userId } : others[device.group];
    if (!owner) continue;
    const [existing] = await db
      .select({ id: cavityModels.id })
      .from(cavityModels)
      .where(and(eq(cavityModels.groupId, owner.groupId), eq(cavityModels.referenceKey, device.key)));
    if (existing) continue;
    const model = await models.create(owner.groupId, owner.userId, device.model, device.key);
    await runsService.create(owner.groupId, owner.userId, {
      kind: 'pole-search',
      modelId: model.id,
      window: device.poleSearch,
      note: `Reference device: ${device.description}`,
    });
    queued++;
  }
  if (queued) log(`[seed] queued ${queued} reference device(s) of the demo catalogue; the workers compute them in the background`);
  return queued;
}
