import { aliasedTable, and, asc, desc, eq, inArray, sql } from 'drizzle-orm';
import type { Queryable } from '../db/client.js';
import { auditLog } from '../db/schema/audit.js';
import { resonances } from '../db/schema/catalogue.js';
import { resonanceComments, resonanceFabrication } from '../db/schema/fabrication.js';
import { researchGroups } from '../db/schema/groups.js';
import { users } from '../db/schema/users.js';
import type { FabricationState } from '../../shared/fabrication/fabrication-states.js';

export type FabricationRow = typeof resonanceFabrication.$inferSelect;

/** The resonance figures fabrication needs, locked FOR UPDATE so concurrent transitions queue up. */
export async function lockResonance(q: Queryable, groupId: string, id: string) {
  const [row] = await q
    .select({
      id: resonances.id,
      energy: resonances.energy,
      width: resonances.width,
      modelName: resonances.modelName,
      modelVersion: resonances.modelVersion,
      groupSlug: researchGroups.slug,
      groupName: researchGroups.name,
    })
    .from(resonances)
    .innerJoin(researchGroups, eq(researchGroups.id, resonances.groupId))
    .where(and(eq(resonances.id, id), eq(resonances.groupId, groupId)))
    .for('update', { of: resonances });
  return row ?? null;
}

export async function findFabrication(q: Queryable, groupId: string, resonanceId: string): Promise<FabricationRow | null> {
  const [row] = await q
    .select()
    .from(resonanceFabrication)
    .where(and(eq(resonanceFabrication.resonanceId, resonanceId), eq(resonanceFabrication.groupId, groupId)));
  return row ?? null;
}

export async function userNames(q: Queryable, ids: (string | null)[]): Promise<Map<string, string>> {
  const wanted = [...new Set(ids.filter((x): x is string => !!x))];
  if (wanted.length === 0) return new Map();
  const rows = await q.select({ id: users.id, name: users.name }).from(users).where(inArray(users.id, wanted));
  return new Map(rows.map((r) => [r.id, r.name]));
}

/** The audit entries of one resonance's fabrication, oldest first: its history. */
export async function fabricationHistory(q: Queryable, groupId: string, resonanceId: string) {
  return q
    .select({ at: auditLog.at, action: auditLog.action, actor: users.name, details: auditLog.details })
    .from(auditLog)
    .leftJoin(users, eq(users.id, auditLog.actorId))
    .where(and(eq(auditLog.groupId, groupId), sql`${auditLog.action} like 'fabrication.%'`, sql`${auditLog.details}->>'resonanceId' = ${resonanceId}`))
    .orderBy(asc(auditLog.at));
}

const proposer = aliasedTable(users, 'proposer');
const reviewer = aliasedTable(users, 'reviewer');

/** Fabrication records of the group in the given states, newest change first, with their resonance figures. */
export async function listFabrication(q: Queryable, groupId: string, states: FabricationState[]) {
  return q
    .select({
      f: resonanceFabrication,
      proposerName: proposer.name,
      reviewerName: reviewer.name,
      modelName: resonances.modelName,
      modelVersion: resonances.modelVersion,
      material: resonances.material,
      energy: resonances.energy,
      width: resonances.width,
      lifetimePs: resonances.lifetimePs,
      quality: resonances.quality,
      nearThreshold: resonances.nearThreshold,
      overlapping: resonances.overlapping,
      source: resonances.source,
    })
    .from(resonanceFabrication)
    .innerJoin(resonances, eq(resonances.id, resonanceFabrication.resonanceId))
    .leftJoin(proposer, eq(proposer.id, resonanceFabrication.proposedBy))
    .leftJoin(reviewer, eq(reviewer.id, resonanceFabrication.reviewedBy))
    .where(and(eq(resonanceFabrication.groupId, groupId), inArray(resonanceFabrication.state, states)))
    .orderBy(desc(resonanceFabrication.updatedAt))
    .limit(500);
}

export async function listComments(q: Queryable, groupId: string, resonanceId: string) {
  return q
    .select({ c: resonanceComments, authorName: users.name })
    .from(resonanceComments)
    .leftJoin(users, eq(users.id, resonanceComments.authorId))
    .where(and(eq(resonanceComments.groupId, groupId), eq(resonanceComments.resonanceId, resonanceId)))
    .orderBy(asc(resonanceComments.createdAt))
    .limit(1000);
}
